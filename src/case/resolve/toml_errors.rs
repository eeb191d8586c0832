//! TOML and serde errors (syntax, unknown and missing keys, wrong types) turned into case
//! errors that name the key path, found from the span.

use std::ops::Range;

use crate::case::error::{nearest, CaseError, CaseErrorKind as K};

/// Converts a TOML/serde error into a `CaseError`, finding the key path from the span.
pub(in crate::case) fn serde_error(name: &str, text: &str, e: &toml::de::Error) -> CaseError {
    let msg = e.message().trim().to_string();
    let span = e.span();
    let ticks = backticked(&msg);
    let table_path = span
        .as_ref()
        .map(|s| key_path_at(text, s))
        .unwrap_or_default();
    let join = |base: &str, leaf: &str| {
        if base.is_empty() {
            leaf.to_string()
        } else {
            format!("{base}.{leaf}")
        }
    };
    if msg.starts_with("unknown field") && !ticks.is_empty() {
        let bad = &ticks[0];
        let valid: Vec<&str> = ticks[1..].iter().map(String::as_str).collect();
        let help = match nearest(bad, valid.iter().copied()) {
            Some(s) => format!(
                "did you mean `{s}`? (valid keys here: {})",
                valid.join(", ")
            ),
            None if valid.is_empty() => "remove it: this table takes no keys".to_string(),
            None => format!("valid keys here: {}", valid.join(", ")),
        };
        let help = format!("{help}; `fluxpick explain KEY` says what each one means");
        // The span is the key's own, so `table_path` already ends with it.
        let key = if table_path.ends_with(bad.as_str()) {
            table_path
        } else {
            join(&table_path, bad)
        };
        return CaseError::new(
            K::UnknownKey,
            name,
            text,
            span,
            key,
            format!("unknown key `{bad}`"),
            help,
        );
    }
    if msg.starts_with("unknown variant") && !ticks.is_empty() {
        let bad = &ticks[0];
        let valid: Vec<&str> = ticks[1..].iter().map(String::as_str).collect();
        let help = match nearest(bad, valid.iter().copied()) {
            Some(s) => format!("did you mean \"{s}\"? (choices: {})", valid.join(", ")),
            None => format!("choices: {}", valid.join(", ")),
        };
        return CaseError::new(
            K::UnknownKey,
            name,
            text,
            span,
            table_path,
            format!("unknown choice \"{bad}\""),
            help,
        );
    }
    if msg.starts_with("missing field") && !ticks.is_empty() {
        let field = &ticks[0];
        let key = join(&table_path, field);
        let example = schema_entry(&key).map_or_else(
            || format!("`{field} = ...`"),
            |d| format!("e.g. `{}`", d.example),
        );
        return CaseError::new(
            K::MissingKey,
            name,
            text,
            span,
            key.clone(),
            format!("missing required key `{field}`"),
            format!("add {example} to this table (`{key}`)"),
        );
    }
    let kind = if msg.starts_with("invalid type")
        || msg.starts_with("invalid length")
        || msg.starts_with("invalid value")
    {
        K::WrongType
    } else {
        K::Syntax
    };
    let help = match (kind, schema_entry(&table_path)) {
        (K::WrongType, Some(d)) => format!(
            "`{}` takes {}, e.g. `{}` (`fluxpick explain {}` for more)",
            d.key,
            d.ty.describe(),
            d.example,
            d.key
        ),
        (K::WrongType, None) => {
            "give a value of the type the key expects (`fluxpick explain KEY` says which)".into()
        }
        _ => "fix the TOML syntax here".to_string(),
    };
    // Text that does not parse has no key path: name the table it is in instead.
    let table_path = match (&span, table_path.is_empty()) {
        (Some(s), true) => enclosing_table(text, s.start),
        _ => table_path,
    };
    CaseError::new(kind, name, text, span, table_path, msg, help)
}

/// The table whose header is the last one above the line of byte `pos` (`domain`,
/// `part[1]` counting the `[[part]]` headers before it), found textually; empty when there
/// is none.
fn enclosing_table(text: &str, pos: usize) -> String {
    let before = text.get(..pos).unwrap_or(text);
    let above = &before[..before.rfind('\n').map_or(0, |i| i + 1)];
    let header = |l: &str| {
        let l = l.split('#').next().unwrap_or("").trim();
        let array = l.starts_with("[[") && l.ends_with("]]");
        (l.starts_with('[') && l.ends_with(']')).then(|| {
            let inner = l.trim_start_matches('[').trim_end_matches(']').trim();
            (inner.to_string(), array)
        })
    };
    let Some((name, array)) = above.lines().rev().find_map(header) else {
        return String::new();
    };
    if !array {
        return name;
    }
    let n = above
        .lines()
        .filter(|l| header(l).is_some_and(|(m, a)| a && m == name))
        .count();
    format!("{name}[{}]", n.saturating_sub(1))
}

/// The case-reference entry of a key path as errors name it (`part[2].circle.radius`).
fn schema_entry(path: &str) -> Option<&'static crate::case::schema::KeyDoc> {
    if path.is_empty() {
        return None;
    }
    match crate::case::schema::lookup(path) {
        crate::case::schema::Lookup::Found(v) if v.len() == 1 => Some(v[0]),
        _ => None,
    }
}

fn backticked(s: &str) -> Vec<String> {
    s.split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_string)
        .collect()
}

/// Dotted key path of the smallest key or value whose span contains `span` (standard tables
/// only span their header, so the whole tree is searched, not just containing branches).
fn key_path_at(text: &str, span: &Range<usize>) -> String {
    use toml::de::{DeTable, DeValue};
    let (doc, _) = DeTable::parse_recoverable(text);
    let contains = |r: &Range<usize>| r.start <= span.start && span.end <= r.end.max(r.start + 1);
    // (span length, depth, path) of the best match so far.
    let mut best: Option<(usize, usize, String)> = None;
    let mut offer = |r: &Range<usize>, depth: usize, path: &str| {
        if contains(r) {
            let len = r.end - r.start;
            let better = match &best {
                None => true,
                Some((l, d, _)) => len < *l || (len == *l && depth >= *d),
            };
            if better {
                best = Some((len, depth, path.to_string()));
            }
        }
    };
    fn walk(
        v: &DeValue<'_>,
        path: &str,
        depth: usize,
        offer: &mut dyn FnMut(&Range<usize>, usize, &str),
    ) {
        match v {
            DeValue::Table(t) => {
                for (k, v) in t.iter() {
                    let p = if path.is_empty() {
                        k.get_ref().to_string()
                    } else {
                        format!("{path}.{}", k.get_ref())
                    };
                    offer(&k.span(), depth + 1, &p);
                    offer(&v.span(), depth + 1, &p);
                    walk(v.get_ref(), &p, depth + 1, offer);
                }
            }
            DeValue::Array(a) => {
                for (i, v) in a.iter().enumerate() {
                    let p = format!("{path}[{i}]");
                    offer(&v.span(), depth + 1, &p);
                    walk(v.get_ref(), &p, depth + 1, offer);
                }
            }
            _ => {}
        }
    }
    walk(&DeValue::Table(doc.into_inner()), "", 0, &mut offer);
    best.map(|b| b.2).unwrap_or_default()
}
