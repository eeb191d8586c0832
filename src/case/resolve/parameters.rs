//! `[parameters]`: each may use the others; overrides (sweeps) replace values.

use std::collections::BTreeMap;

use super::{eval_expr, sp, Result};
use crate::case::error::{nearest, CaseErrorKind as K};
use crate::case::expr::{Expr, RESERVED};
use crate::case::raw::{Num, RawCase, SNum};
use crate::case::SourceInfo;

/// Evaluates `[parameters]` (each may use the others), with overrides applied.
pub(super) fn resolve_parameters(
    raw: &RawCase,
    src: &SourceInfo,
    overrides: &BTreeMap<String, f64>,
) -> Result<BTreeMap<String, f64>> {
    let empty = BTreeMap::new();
    let table = raw.parameters.as_ref().map_or(&empty, |t| t.get_ref());
    let table_span = raw.parameters.as_ref().map(|t| t.span());
    let names: Vec<&str> = table.keys().map(String::as_str).collect();
    for (name, v) in table {
        let ident = name
            .chars()
            .next()
            .is_some_and(|c| c.is_alphabetic() || c == '_')
            && name.chars().all(|c| c.is_alphanumeric() || c == '_');
        if !ident || RESERVED.contains(&name.as_str()) {
            return Err(src.error(
                K::BadExpression,
                sp(v),
                format!("parameters.{name}"),
                format!("`{name}` cannot be a parameter name"),
                "use letters, digits and `_`, starting with a letter, and none of pi, sqrt, \
                 sin, cos, tan, abs, min, max",
            ));
        }
    }
    for name in overrides.keys() {
        if !table.contains_key(name) {
            let help = match nearest(name, names.iter().copied()) {
                Some(m) => format!("did you mean `{m}`? Overrides must name a [parameters] entry"),
                None if names.is_empty() => "this case has no [parameters]".to_string(),
                None => format!("parameters in this case: {}", names.join(", ")),
            };
            return Err(src.error(
                K::UnknownOverride,
                table_span.clone(),
                format!("parameters.{name}"),
                format!("override of `{name}`, which is not a parameter of this case"),
                help,
            ));
        }
    }
    let mut done: BTreeMap<String, f64> = overrides.clone();
    let mut stack: Vec<String> = Vec::new();
    fn visit(
        name: &str,
        table: &BTreeMap<String, SNum>,
        src: &SourceInfo,
        names: &[&str],
        done: &mut BTreeMap<String, f64>,
        stack: &mut Vec<String>,
    ) -> Result<f64> {
        if let Some(v) = done.get(name) {
            return Ok(*v);
        }
        let raw = &table[name];
        let key = format!("parameters.{name}");
        if let Some(pos) = stack.iter().position(|s| s == name) {
            let mut cycle: Vec<&str> = stack[pos..].iter().map(String::as_str).collect();
            cycle.push(name);
            return Err(src.error(
                K::BadExpression,
                sp(raw),
                key,
                format!(
                    "parameters refer to each other in a cycle: {}",
                    cycle.join(" -> ")
                ),
                "give one of them a plain number",
            ));
        }
        let v = match raw.get_ref() {
            Num::Value(v) => *v,
            Num::Expr(s) => {
                let parsed = Expr::parse(s);
                if let Ok(e) = &parsed {
                    stack.push(name.to_string());
                    for (dep, _) in e.names() {
                        if table.contains_key(&dep) {
                            visit(&dep, table, src, names, done, stack)?;
                        }
                    }
                    stack.pop();
                }
                let done_ref = &*done;
                eval_expr(src, s, &raw.span(), &key, names, &|n| {
                    done_ref.get(n).copied()
                })?
            }
        };
        if !v.is_finite() {
            return Err(src.error(
                K::NotFinite,
                sp(raw),
                key,
                "not a finite number",
                "give the parameter an ordinary number (TOML's nan and inf are not values)",
            ));
        }
        done.insert(name.to_string(), v);
        Ok(v)
    }
    for name in table.keys() {
        visit(name, table, src, &names, &mut done, &mut stack)?;
    }
    Ok(done)
}
