//! Raw → typed: evaluates expressions, applies the length unit, fills defaults and checks
//! every rule of the format, each failure pointing at the offending value.

use std::collections::BTreeMap;
use std::ops::Range;
use std::path::Path;

use fluxpick_postproc::wire;
use toml::Spanned;

use super::error::{nearest, CaseError, CaseErrorKind as K};
use super::expr::{Expr, ExprErrorKind, RESERVED};
use super::geom;
use super::model::*;
use super::raw::*;
use super::SourceInfo;

type Result<T> = std::result::Result<T, CaseError>;

/// Default fill factor when a coil gives none: common practice for random-wound enamelled
/// round wire (0.5–0.7), no source.
pub const DEFAULT_FILL_FACTOR: f64 = 0.6;
/// Default winding temperature, °C: the copper resistivity reference temperature (IEC 60028).
pub const DEFAULT_TEMPERATURE_C: f64 = 20.0;
/// Default planar depth: 1 m (CASE-FORMAT.md).
pub const DEFAULT_DEPTH_M: f64 = 1.0;
/// Smallest width of a region as a fraction of the domain's diagonal. The mesher merges
/// points closer than 1e-9 of it; a circle of radius 1e-7 mm in a 200 mm square domain
/// vanished in a trial (radius 1e-6 mm still meshed), so this leaves a factor of ten to spare.
pub const MIN_FEATURE_FRACTION: f64 = 1e-7;
/// Largest estimated triangle count ([`super::estimated_elements`]) a case may ask for:
/// about twenty times the largest mesh of the benchmarks (954k triangles). A guard against
/// slips such as a domain in m with mesh sizes meant in mm (a 2e9 mm square domain at mesh
/// size 1 mm was still meshing after 60 s in a trial); not a measured capacity.
pub const MAX_ESTIMATED_TRIANGLES: f64 = 2e7;
/// Speed of light in vacuum, m/s (exact, SI definition of the metre).
const SPEED_OF_LIGHT: f64 = 299_792_458.0;
/// The model neglects displacement current (magnetoquasistatic): the domain must be small
/// against the free-space wavelength. A tenth is the usual "electrically small" rule of
/// thumb, no source.
const MAX_DOMAIN_OVER_WAVELENGTH: f64 = 0.1;

/// A conductor or a coil side resolved so far, for the overlap check.
struct Carrier {
    shape: Shape,
    span: Range<usize>,
    key: String,
    name: String,
}

// ---------------------------------------------------------------------------------------
// serde / TOML errors

/// Converts a TOML/serde error into a `CaseError`, finding the key path from the span.
pub(super) fn serde_error(name: &str, text: &str, e: &toml::de::Error) -> CaseError {
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
fn schema_entry(path: &str) -> Option<&'static crate::schema::KeyDoc> {
    if path.is_empty() {
        return None;
    }
    match crate::schema::lookup(path) {
        crate::schema::Lookup::Found(v) if v.len() == 1 => Some(v[0]),
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

// ---------------------------------------------------------------------------------------
// the resolver

struct Ctx<'a> {
    src: &'a SourceInfo,
    params: BTreeMap<String, f64>,
    unit: f64,
    unit_name: &'static str,
    axisym: bool,
}

fn sp<T>(s: &Spanned<T>) -> Option<Range<usize>> {
    Some(s.span())
}

/// Maps an expression's byte range onto the file, when the TOML string is a plain literal.
fn refine_span(text: &str, span: &Range<usize>, expr: &str, at: &Range<usize>) -> Range<usize> {
    let lit = text.get(span.clone()).unwrap_or("");
    let inner = lit.get(1..lit.len().saturating_sub(1)).unwrap_or("");
    if lit.len() >= 2 && inner == expr && at.end <= expr.len() {
        span.start + 1 + at.start..span.start + 1 + at.end.max(at.start + 1).min(expr.len())
    } else {
        span.clone()
    }
}

/// Evaluates one expression with `lookup`, turning expression errors into case errors.
fn eval_expr(
    src: &SourceInfo,
    s: &str,
    span: &Range<usize>,
    key: &str,
    names: &[&str],
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<f64> {
    let e = Expr::parse(s).and_then(|e| e.eval(lookup));
    e.map_err(|err| {
        let at = refine_span(&src.text, span, s, &err.at);
        let (kind, help) = match &err.kind {
            ExprErrorKind::Syntax => (
                K::BadExpression,
                "expressions use numbers, [parameters] names, + - * / ^, parentheses, pi, \
                 sqrt, sin, cos, tan (radians), abs, min(a, b), max(a, b)"
                    .to_string(),
            ),
            ExprErrorKind::Undefined(n) => (
                K::UndefinedName,
                match nearest(n, names.iter().copied()) {
                    Some(m) => format!("did you mean `{m}`? Or define `{n}` in [parameters]"),
                    None => format!("define `{n}` in [parameters], e.g. `{n} = 10`"),
                },
            ),
            ExprErrorKind::DivisionByZero | ExprErrorKind::NotFinite => (
                K::NotFinite,
                "check the parameters this expression uses: the result must be a finite number"
                    .to_string(),
            ),
        };
        src.error(
            kind,
            Some(at),
            key,
            format!("{} in \"{s}\"", err.message),
            help,
        )
    })
}

/// Evaluates `[parameters]` (each may use the others), with overrides applied.
fn resolve_parameters(
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

impl Ctx<'_> {
    fn err(
        &self,
        kind: K,
        span: Option<Range<usize>>,
        key: &str,
        message: impl Into<String>,
        help: impl Into<String>,
    ) -> CaseError {
        self.src.error(kind, span, key, message, help)
    }

    /// A plain number (no unit applied).
    fn num(&self, v: &SNum, key: &str) -> Result<f64> {
        match v.get_ref() {
            Num::Value(x) if !x.is_finite() => Err(self.err(
                K::NotFinite,
                sp(v),
                key,
                format!("{x} is not a finite number"),
                format!(
                    "give `{}` an ordinary number: TOML's nan and inf are not valid values",
                    key.rsplit('.').next().unwrap_or(key)
                ),
            )),
            Num::Value(x) => Ok(*x),
            Num::Expr(s) => {
                let names: Vec<&str> = self.params.keys().map(String::as_str).collect();
                eval_expr(self.src, s, &v.span(), key, &names, &|n| {
                    self.params.get(n).copied()
                })
            }
        }
    }

    fn positive(&self, v: &SNum, key: &str, what: &str) -> Result<f64> {
        let x = self.num(v, key)?;
        if x > 0.0 {
            Ok(x)
        } else {
            Err(self.err(
                K::NotPositive,
                sp(v),
                key,
                format!("{what} must be greater than zero (got {x})"),
                format!(
                    "give `{}` a positive value",
                    key.rsplit('.').next().unwrap_or(key)
                ),
            ))
        }
    }

    /// A length in metres.
    fn len(&self, v: &SNum, key: &str) -> Result<f64> {
        Ok(self.num(v, key)? * self.unit)
    }

    /// A positive length in metres.
    fn pos_len(&self, v: &SNum, key: &str, what: &str) -> Result<f64> {
        Ok(self.positive(v, key, what)? * self.unit)
    }

    fn opt_mesh_size(&self, v: &Option<SNum>, key: &str) -> Result<Option<f64>> {
        v.as_ref()
            .map(|v| self.pos_len(v, key, "the mesh size"))
            .transpose()
    }

    /// A point in metres.
    fn point(&self, p: &Pt, key: &str) -> Result<[f64; 2]> {
        let [a, b] = &p.get_ref().0;
        Ok([
            self.len(a, &format!("{key}[0]"))?,
            self.len(b, &format!("{key}[1]"))?,
        ])
    }

    /// A pair of positive lengths in metres.
    fn pos_pair(&self, p: &Pt, key: &str, what: &str) -> Result<[f64; 2]> {
        let [a, b] = &p.get_ref().0;
        Ok([
            self.pos_len(a, &format!("{key}[0]"), what)?,
            self.pos_len(b, &format!("{key}[1]"), what)?,
        ])
    }

    /// An integer count `>= min`.
    fn count(&self, v: &SNum, key: &str, min: usize, what: &str) -> Result<usize> {
        let x = self.num(v, key)?;
        if x.fract() != 0.0 || x < min as f64 || x > 1e9 {
            return Err(self.err(
                K::OutOfRange,
                sp(v),
                key,
                format!("{what} must be a whole number of at least {min} (got {x})"),
                format!("give a whole number >= {min}"),
            ));
        }
        Ok(x as usize)
    }

    /// The one shape of an entity. `entity_span` is underlined when no shape key is given.
    fn shape(
        &self,
        keys: ShapeKeys<'_>,
        path: &str,
        entity_span: Range<usize>,
        what: &str,
    ) -> Result<(Shape, Range<usize>)> {
        let mut present: Vec<(&str, Range<usize>)> = Vec::new();
        if let Some(s) = keys.rect {
            present.push(("rect", s.span()));
        }
        if let Some(s) = keys.circle {
            present.push(("circle", s.span()));
        }
        if let Some(s) = keys.ellipse {
            present.push(("ellipse", s.span()));
        }
        if let Some(s) = keys.annulus {
            present.push(("annulus", s.span()));
        }
        if let Some(s) = keys.polygon {
            present.push(("polygon", s.span()));
        }
        present.sort_by_key(|p| p.1.start);
        if present.is_empty() {
            return Err(self.err(
                K::ShapeKeys,
                Some(entity_span),
                path,
                format!("{what} has no shape"),
                "give exactly one of rect, circle, ellipse, annulus, polygon",
            ));
        }
        if present.len() > 1 {
            return Err(self.err(
                K::ShapeKeys,
                Some(present[1].1.clone()),
                &format!("{path}.{}", present[1].0),
                format!(
                    "{what} has two shape keys, `{}` and `{}`",
                    present[0].0, present[1].0
                ),
                "give exactly one shape key per entity: remove one of them",
            ));
        }
        let span = present[0].1.clone();
        let shape = if let Some(r) = keys.rect {
            self.rect(r, &format!("{path}.rect"))?
        } else if let Some(c) = keys.circle {
            let c = c.get_ref();
            let k = format!("{path}.circle");
            Shape::Circle {
                center: self.point(&c.center, &format!("{k}.center"))?,
                radius: self.pos_len(&c.radius, &format!("{k}.radius"), "the radius")?,
            }
        } else if let Some(e) = keys.ellipse {
            let e = e.get_ref();
            let k = format!("{path}.ellipse");
            Shape::Ellipse {
                center: self.point(&e.center, &format!("{k}.center"))?,
                semi_axes: self.pos_pair(&e.semi_axes, &format!("{k}.semi_axes"), "a semi-axis")?,
            }
        } else if let Some(a) = keys.annulus {
            let a = a.get_ref();
            let k = format!("{path}.annulus");
            let inner = self.pos_len(&a.inner, &format!("{k}.inner"), "the inner radius")?;
            let outer = self.pos_len(&a.outer, &format!("{k}.outer"), "the outer radius")?;
            if outer <= inner {
                return Err(self.err(
                    K::NotPositive,
                    sp(&a.outer),
                    &format!("{k}.outer"),
                    "the outer radius must exceed the inner radius",
                    "swap them, or make the annulus wider (a full disk is a `circle`)",
                ));
            }
            Shape::Annulus {
                center: self.point(&a.center, &format!("{k}.center"))?,
                inner,
                outer,
            }
        } else if let Some(p) = keys.polygon {
            self.polygon(p, &format!("{path}.polygon"))?
        } else {
            unreachable!("one shape key is present")
        };
        Ok((shape, span))
    }

    fn rect(&self, r: &Spanned<RawRect>, key: &str) -> Result<Shape> {
        let v = r.get_ref();
        match (&v.min, &v.max, &v.center, &v.size) {
            (Some(min), Some(max), None, None) => {
                let lo = self.point(min, &format!("{key}.min"))?;
                let hi = self.point(max, &format!("{key}.max"))?;
                for k in 0..2 {
                    if hi[k] <= lo[k] {
                        return Err(self.err(
                            K::NotPositive,
                            sp(max),
                            &format!("{key}.max"),
                            format!(
                                "the rectangle has zero or negative {}: max must exceed min in \
                                 both coordinates",
                                if k == 0 { "width" } else { "height" }
                            ),
                            "make each `max` coordinate larger than the matching `min` one",
                        ));
                    }
                }
                Ok(Shape::Rect { min: lo, max: hi })
            }
            (None, None, Some(c), Some(s)) => {
                let c = self.point(c, &format!("{key}.center"))?;
                let s = self.pos_pair(s, &format!("{key}.size"), "the rectangle's size")?;
                Ok(Shape::Rect {
                    min: [c[0] - s[0] / 2.0, c[1] - s[1] / 2.0],
                    max: [c[0] + s[0] / 2.0, c[1] + s[1] / 2.0],
                })
            }
            _ => Err(self.err(
                K::ShapeKeys,
                sp(r),
                key,
                "a rect needs either `min` and `max`, or `center` and `size`",
                "write rect = { min = [x0, y0], max = [x1, y1] } or \
                 rect = { center = [x, y], size = [w, h] }",
            )),
        }
    }

    fn polygon(&self, p: &Spanned<Vec<Pt>>, key: &str) -> Result<Shape> {
        let mut pts = Vec::with_capacity(p.get_ref().len());
        for (i, q) in p.get_ref().iter().enumerate() {
            pts.push(self.point(q, &format!("{key}[{i}]"))?);
        }
        // Accept a closed ring (first point repeated at the end).
        if pts.len() > 3 && pts.first() == pts.last() {
            pts.pop();
        }
        if pts.len() < 3 {
            return Err(self.err(
                K::BadPolygon,
                sp(p),
                key,
                format!("a polygon needs at least 3 points (got {})", pts.len()),
                "list the corners as [[x, y], ...]",
            ));
        }
        let (lo, hi) = geom::bbox(&Shape::Polygon(pts.clone()));
        let scale = (hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2);
        let zero_area = || {
            self.err(
                K::BadPolygon,
                sp(p),
                key,
                "the polygon has zero area",
                "its points must not all lie on one line",
            )
        };
        if scale == 0.0 || geom::points_collinear(&pts) {
            return Err(zero_area());
        }
        // Before the area: the lobes of a figure of eight cancel in the signed area.
        if geom::polygon_self_intersects(&pts) {
            return Err(self.err(
                K::BadPolygon,
                sp(p),
                key,
                "the polygon's edges cross each other",
                "list the corners in order around the outline so that no edges cross",
            ));
        }
        if geom::polygon_signed_area(&pts).abs() <= 1e-12 * scale {
            return Err(zero_area());
        }
        Ok(Shape::Polygon(pts))
    }

    /// Axis and domain checks for a region shape.
    fn check_placement(
        &self,
        shape: &Shape,
        span: &Range<usize>,
        key: &str,
        domain: &Domain,
    ) -> Result<()> {
        let (lo, hi) = geom::bbox(shape);
        if self.axisym && geom::area(shape, true) <= 0.0 {
            return Err(self.err(
                K::Axisymmetry,
                Some(span.clone()),
                key,
                format!(
                    "the shape lies wholly at r < 0 (its largest r is {})",
                    self.show(hi[0])
                ),
                "axisymmetric coordinates are [r, z] with r >= 0: move it to positive r",
            ));
        }
        let lo = if self.axisym {
            [lo[0].max(0.0), lo[1]]
        } else {
            lo
        };
        let outside = match &domain.shape {
            Shape::Rect { min, max } => {
                let tol = 1e-9 * ((max[0] - min[0]) + (max[1] - min[1]));
                lo[0] < min[0] - tol
                    || lo[1] < min[1] - tol
                    || hi[0] > max[0] + tol
                    || hi[1] > max[1] + tol
            }
            Shape::Circle { center, radius } => {
                geom::max_distance_from(shape, *center) > radius * (1.0 + 1e-9)
            }
            _ => false,
        };
        if outside {
            return Err(self.err(
                K::OutsideDomain,
                Some(span.clone()),
                key,
                format!(
                    "the shape is not inside the domain (its bounding box runs from [{}, {}] \
                     to [{}, {}])",
                    self.show(lo[0]),
                    self.show(lo[1]),
                    self.show(hi[0]),
                    self.show(hi[1])
                ),
                "enlarge [domain] or move the shape into it",
            ));
        }
        let (dlo, dhi) = geom::bbox(&domain.shape);
        let size = (dhi[0] - dlo[0]).hypot(dhi[1] - dlo[1]);
        let width = geom::smallest_extent(shape);
        if width < MIN_FEATURE_FRACTION * size {
            return Err(self.err(
                K::OutOfRange,
                Some(span.clone()),
                key,
                format!(
                    "the shape is too small to mesh in this domain: it is {} wide at its \
                     narrowest, less than {} of the domain's diagonal ({})",
                    self.show(width),
                    fmt_g(MIN_FEATURE_FRACTION),
                    self.show(size)
                ),
                "make the shape larger or the domain smaller",
            ));
        }
        Ok(())
    }

    /// Refuses a conductor or coil side that shares area with an earlier one: both impose a
    /// current, so the one drawn over would silently lose part of its cross-section.
    fn check_overlap(
        &self,
        shape: &Shape,
        span: &Range<usize>,
        key: &str,
        earlier: &[Carrier],
    ) -> Result<()> {
        for c in earlier {
            if geom::overlaps(shape, &c.shape, self.axisym) {
                let (line, _) = super::error::line_col_of(&self.src.text, c.span.start);
                return Err(self.err(
                    K::Overlap,
                    Some(span.clone()),
                    key,
                    format!(
                        "the shape overlaps `{}` (\"{}\", line {line}): conductors and coil \
                         sides carry current and cannot share area",
                        c.key, c.name
                    ),
                    "move or shrink one of them: they may touch or share an edge, but only \
                     parts may lie under later entries",
                ));
            }
        }
        Ok(())
    }

    /// A length in metres shown in the file's unit.
    fn show(&self, m: f64) -> String {
        format!("{} {}", fmt_g(m / self.unit), self.unit_name)
    }
}

/// Compact number formatting: up to 6 significant digits, no trailing zeros.
pub(super) fn fmt_g(x: f64) -> String {
    if x == 0.0 {
        return "0".into();
    }
    let a = x.abs();
    if (1e-4..1e7).contains(&a) {
        let decimals = (5 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{x:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.5e}");
        match s.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => s,
        }
    }
}

fn side_name(s: DomainSide) -> &'static str {
    match s {
        DomainSide::Left => "left",
        DomainSide::Right => "right",
        DomainSide::Bottom => "bottom",
        DomainSide::Top => "top",
    }
}

fn unit_name(u: RawLengthUnit) -> &'static str {
    match u {
        RawLengthUnit::Mm => "mm",
        RawLengthUnit::Cm => "cm",
        RawLengthUnit::M => "m",
        RawLengthUnit::In => "in",
    }
}

pub(super) fn resolve(
    raw: &RawCase,
    src: &SourceInfo,
    overrides: &BTreeMap<String, f64>,
) -> Result<Case> {
    let params = resolve_parameters(raw, src, overrides)?;
    let m = raw.model.get_ref();
    let unit = m
        .length_unit
        .as_ref()
        .map_or(RawLengthUnit::Mm, |u| *u.get_ref());
    let symmetry = match m.symmetry.get_ref() {
        RawSymmetry::Planar => Symmetry::Planar,
        RawSymmetry::Axisymmetric => Symmetry::Axisymmetric,
    };
    let cx = Ctx {
        src,
        params,
        unit: unit.metres(),
        unit_name: unit_name(unit),
        axisym: symmetry == Symmetry::Axisymmetric,
    };

    // [model]
    let frequency = match &m.frequency {
        None => 0.0,
        Some(f) => {
            let v = cx.num(f, "model.frequency")?;
            if v < 0.0 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(f),
                    "model.frequency",
                    format!("the frequency must not be negative (got {v})"),
                    "give the frequency in Hz, 0 for a magnetostatic case",
                ));
            }
            v
        }
    };
    let depth = match &m.depth {
        None => DEFAULT_DEPTH_M,
        Some(d) => cx.pos_len(d, "model.depth", "the depth")?,
    };
    let element_order = match &m.element_order {
        None => 2,
        Some(o) => {
            let v = cx.num(o, "model.element_order")?;
            if v == 1.0 || v == 2.0 {
                v as u8
            } else {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(o),
                    "model.element_order",
                    format!("the element order must be 1 or 2 (got {v})"),
                    "use 2 (the default, quadratic elements) or 1 (linear)",
                ));
            }
        }
    };
    let accuracy = match &m.accuracy {
        None => None,
        Some(a) => {
            let v = cx.num(a, "model.accuracy")?;
            if !(1e-6..=0.5).contains(&v) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(a),
                    "model.accuracy",
                    format!(
                        "the accuracy target is a relative error between 1e-6 and 0.5 (got {v})"
                    ),
                    "write e.g. accuracy = 0.005 for 0.5 %",
                ));
            }
            Some(v)
        }
    };
    let max_triangles = match &m.max_triangles {
        None => super::model::DEFAULT_MAX_TRIANGLES,
        Some(a) => {
            let v = cx.num(a, "model.max_triangles")?;
            if !((100.0..=5e7).contains(&v) && v.fract() == 0.0) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(a),
                    "model.max_triangles",
                    format!("the element budget must be a whole number from 100 to 5e7 (got {v})"),
                    "write e.g. max_triangles = 500000",
                ));
            }
            v as usize
        }
    };
    let uniform_refinement = m
        .refinement
        .as_ref()
        .is_some_and(|r| *r.get_ref() == RawRefinement::Uniform);
    let title = m
        .title
        .as_ref()
        .map_or_else(String::new, |t| t.get_ref().clone());

    // [domain] and [[edge]]
    let domain = resolve_domain(&cx, raw)?;
    if let Some(f) = m.frequency.as_ref().filter(|_| frequency > 0.0) {
        let (lo, hi) = geom::bbox(&domain.shape);
        let size = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
        let wavelength = SPEED_OF_LIGHT / frequency;
        if size > MAX_DOMAIN_OVER_WAVELENGTH * wavelength {
            return Err(cx.err(
                K::OutOfRange,
                sp(f),
                "model.frequency",
                format!(
                    "at {} Hz the free-space wavelength ({} m) is not large against the domain \
                     ({} m across): the model neglects displacement current and does not hold",
                    fmt_g(frequency),
                    fmt_g(wavelength),
                    fmt_g(size)
                ),
                format!(
                    "keep the domain below a tenth of the wavelength: here the frequency must \
                     not exceed {} Hz",
                    fmt_g(MAX_DOMAIN_OVER_WAVELENGTH * SPEED_OF_LIGHT / size)
                ),
            ));
        }
    }

    // [background]
    let background = match &raw.background {
        None => None,
        Some(b) => {
            let bv = b.get_ref();
            let field = cx.num(&bv.b, "background.b")?;
            if field < 0.0 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(&bv.b),
                    "background.b",
                    format!("the background field must not be negative (got {field})"),
                    "give |B| in T rms; reverse `direction` or use phase = 180 instead",
                ));
            }
            let [dx, dy] = &bv.direction.get_ref().0;
            let d = [
                cx.num(dx, "background.direction[0]")?,
                cx.num(dy, "background.direction[1]")?,
            ];
            let n = (d[0] * d[0] + d[1] * d[1]).sqrt();
            if n == 0.0 {
                return Err(cx.err(
                    K::NotPositive,
                    sp(&bv.direction),
                    "background.direction",
                    "the direction is the zero vector",
                    "give a direction such as [0, 1]",
                ));
            }
            if cx.axisym && d[0].abs() > 1e-9 * n {
                return Err(cx.err(
                    K::Axisymmetry,
                    sp(&bv.direction),
                    "background.direction",
                    "an axisymmetric model can only have an axial background field",
                    "use direction = [0, 1] (along z); a transverse field needs a planar model",
                ));
            }
            let phase_deg = bv
                .phase
                .as_ref()
                .map_or(Ok(0.0), |p| cx.num(p, "background.phase"))?;
            Some(Background {
                b: field,
                direction: [d[0] / n, d[1] / n],
                phase_deg,
            })
        }
    };

    // [materials]
    let mut materials = builtin_materials();
    for (name, mat) in &raw.materials {
        let k = format!("materials.{name}");
        let mv = mat.get_ref();
        let mu_r = match &mv.mu_r {
            None => 1.0,
            Some(v) => cx.positive(v, &format!("{k}.mu_r"), "the relative permeability")?,
        };
        let conductivity = match &mv.conductivity {
            None => 0.0,
            Some(v) => {
                let s = cx.num(v, &format!("{k}.conductivity"))?;
                if s < 0.0 {
                    return Err(cx.err(
                        K::OutOfRange,
                        sp(v),
                        &format!("{k}.conductivity"),
                        format!("the conductivity must not be negative (got {s})"),
                        "give it in S/m, 0 for an insulator",
                    ));
                }
                s
            }
        };
        let b_sat = mv
            .b_sat
            .as_ref()
            .map(|v| cx.positive(v, &format!("{k}.b_sat"), "the saturation flux density"))
            .transpose()?;
        let density = mv
            .density
            .as_ref()
            .map(|v| cx.positive(v, &format!("{k}.density"), "the density"))
            .transpose()?;
        let from_file = match &mv.bh_file {
            None => None,
            Some(f) => {
                if mv.bh.is_some() || mv.bh_curve.is_some() {
                    return Err(cx.err(
                        K::ShapeKeys,
                        sp(f),
                        &format!("{k}.bh_file"),
                        "give one of `bh`, `bh_curve` and `bh_file`",
                        "remove the others",
                    ));
                }
                Some(read_bh_file(&cx, f, &format!("{k}.bh_file"))?)
            }
        };
        let bh = match (&mv.bh, &mv.bh_curve) {
            _ if from_file.is_some() => from_file,
            (Some(_), Some(named)) => {
                return Err(cx.err(
                    K::ShapeKeys,
                    sp(named),
                    &format!("{k}.bh_curve"),
                    "give either `bh` (points) or `bh_curve` (a built-in curve), not both",
                    "remove one of them",
                ))
            }
            (None, None) => None,
            (Some(curve), None) => Some(resolve_bh(&cx, curve, &format!("{k}.bh"))?),
            (None, Some(named)) => {
                use fluxpick_solver::bh::typical;
                let pts: &[[f64; 2]] = match named.get_ref().as_str() {
                    "mild-steel" => &typical::MILD_STEEL,
                    "electrical-steel" => &typical::ELECTRICAL_STEEL,
                    "mnzn-ferrite" => &typical::MNZN_FERRITE,
                    other => {
                        let names = ["mild-steel", "electrical-steel", "mnzn-ferrite"];
                        let help = match nearest(other, names.iter().copied()) {
                            Some(m) => format!(
                                "did you mean `{m}`? The built-in curves are {}",
                                names.join(", ")
                            ),
                            None => format!(
                                "the built-in curves are {}; or give `bh` points",
                                names.join(", ")
                            ),
                        };
                        return Err(cx.err(
                            K::UnknownKey,
                            sp(named),
                            &format!("{k}.bh_curve"),
                            format!("no built-in B-H curve `{other}`"),
                            help,
                        ));
                    }
                };
                Some(pts.to_vec())
            }
        };
        materials.insert(
            name.clone(),
            Material {
                name: name.clone(),
                mu_r,
                conductivity,
                bh,
                b_sat,
                density,
            },
        );
    }
    let material_names: Vec<String> = materials.keys().cloned().collect();
    let check_material = |m: &Spanned<String>, key: &str| -> Result<String> {
        let name = m.get_ref();
        if materials.contains_key(name) {
            return Ok(name.clone());
        }
        let help = match nearest(name, material_names.iter().map(String::as_str)) {
            Some(s) => format!("did you mean \"{s}\"? Or define [materials.{name}]"),
            None => format!(
                "define [materials.{name}] or use one of: {}",
                material_names.join(", ")
            ),
        };
        Err(cx.err(
            K::UnknownMaterial,
            sp(m),
            key,
            format!("unknown material \"{name}\""),
            help,
        ))
    };

    // names shared by parts, conductors and coils
    let mut seen: BTreeMap<String, (String, Range<usize>)> = BTreeMap::new();
    let mut check_name = |n: &Spanned<String>, key: &str| -> Result<String> {
        let name = n.get_ref().trim();
        if name.is_empty() {
            return Err(cx.err(
                K::NotPositive,
                sp(n),
                key,
                "the name is empty",
                "give it a name",
            ));
        }
        if let Some((first, r)) = seen.get(name) {
            let (line, _) = super::error::line_col_of(&src.text, r.start);
            return Err(cx.err(
                K::DuplicateName,
                sp(n),
                key,
                format!("the name \"{name}\" is already used by `{first}` (line {line})"),
                "parts, conductors and coils need distinct names: rename one",
            ));
        }
        seen.insert(
            name.to_string(),
            (key.trim_end_matches(".name").to_string(), n.span()),
        );
        Ok(name.to_string())
    };

    // [[part]]
    let mut parts = Vec::new();
    for (i, p) in raw.parts.iter().enumerate() {
        let path = format!("part[{i}]");
        let pv = p.get_ref();
        let name = check_name(&pv.name, &format!("{path}.name"))?;
        let material = check_material(&pv.material, &format!("{path}.material"))?;
        let (shape, span) = cx.shape(pv.shape_keys(), &path, p.span(), "the part")?;
        cx.check_placement(&shape, &span, &path, &domain)?;
        let mesh_size = cx.opt_mesh_size(&pv.mesh_size, &format!("{path}.mesh_size"))?;
        let skin_mesh_size =
            cx.opt_mesh_size(&pv.skin_mesh_size, &format!("{path}.skin_mesh_size"))?;
        parts.push(Part {
            name,
            material,
            shape,
            mesh_size,
            skin_mesh_size,
        });
    }

    // [[conductor]]
    let mut conductors = Vec::new();
    let mut carriers: Vec<Carrier> = Vec::new();
    for (i, c) in raw.conductors.iter().enumerate() {
        let path = format!("conductor[{i}]");
        let v = c.get_ref();
        let name = check_name(&v.name, &format!("{path}.name"))?;
        let material = match &v.material {
            None => COPPER.to_string(),
            Some(m) => check_material(m, &format!("{path}.material"))?,
        };
        let (shape, span) = cx.shape(v.shape_keys(), &path, c.span(), "the conductor")?;
        cx.check_placement(&shape, &span, &path, &domain)?;
        cx.check_overlap(&shape, &span, &path, &carriers)?;
        carriers.push(Carrier {
            shape: shape.clone(),
            span,
            key: path.clone(),
            name: name.clone(),
        });
        let current = cx.num(&v.current, &format!("{path}.current"))?;
        let phase_deg = v
            .phase
            .as_ref()
            .map_or(Ok(0.0), |p| cx.num(p, &format!("{path}.phase")))?;
        let kind = match v.kind.as_ref().map(|k| *k.get_ref()) {
            None | Some(RawConductorKind::Solid) => ConductorKind::Solid,
            Some(RawConductorKind::Stranded) => ConductorKind::Stranded,
        };
        let mesh_size = cx.opt_mesh_size(&v.mesh_size, &format!("{path}.mesh_size"))?;
        let skin_mesh_size =
            cx.opt_mesh_size(&v.skin_mesh_size, &format!("{path}.skin_mesh_size"))?;
        conductors.push(Conductor {
            name,
            material,
            shape,
            current,
            phase_deg,
            kind,
            mesh_size,
            skin_mesh_size,
        });
    }

    // [[coil]]
    let mut coils = Vec::new();
    for (i, c) in raw.coils.iter().enumerate() {
        let path = format!("coil[{i}]");
        let name = check_name(&c.get_ref().name, &format!("{path}.name"))?;
        coils.push(resolve_coil(&cx, c, &path, name, &domain, &mut carriers)?);
    }

    // [circuit]
    let circuit = match &raw.circuit {
        None => None,
        Some(c) => Some(resolve_circuit(&cx, c, &coils)?),
    };

    // [[probe]]
    let mut probes: Vec<Probe> = Vec::new();
    for (i, p) in raw.probes.iter().enumerate() {
        let path = format!("probe[{i}]");
        let v = p.get_ref();
        let name = v.name.get_ref().trim().to_string();
        if let Some(j) = probes.iter().position(|q| q.name == name) {
            return Err(cx.err(
                K::DuplicateName,
                sp(&v.name),
                &format!("{path}.name"),
                format!("the probe name \"{name}\" is already used by probe[{j}]"),
                "probes need distinct names: rename one",
            ));
        }
        let kind = match (&v.line, &v.grid) {
            (Some(l), None) => {
                let k = format!("{path}.line");
                let lv = l.get_ref();
                let from = cx.point(&lv.from, &format!("{k}.from"))?;
                let to = cx.point(&lv.to, &format!("{k}.to"))?;
                if from == to {
                    return Err(cx.err(
                        K::NotPositive,
                        sp(&lv.to),
                        &format!("{k}.to"),
                        "the probe line has zero length",
                        "give different `from` and `to` points",
                    ));
                }
                let points = cx.count(
                    &lv.points,
                    &format!("{k}.points"),
                    2,
                    "the number of points",
                )?;
                ProbeKind::Line { from, to, points }
            }
            (None, Some(g)) => {
                let k = format!("{path}.grid");
                let gv = g.get_ref();
                let min = cx.point(&gv.min, &format!("{k}.min"))?;
                let max = cx.point(&gv.max, &format!("{k}.max"))?;
                if max[0] <= min[0] || max[1] <= min[1] {
                    return Err(cx.err(
                        K::NotPositive,
                        sp(&gv.max),
                        &format!("{k}.max"),
                        "the probe grid has zero or negative extent",
                        "make each `max` coordinate larger than the matching `min` one",
                    ));
                }
                let [nx, ny] = &gv.points.get_ref().0;
                let points = [
                    cx.count(nx, &format!("{k}.points[0]"), 2, "the number of points")?,
                    cx.count(ny, &format!("{k}.points[1]"), 2, "the number of points")?,
                ];
                ProbeKind::Grid { min, max, points }
            }
            (Some(_), Some(g)) => {
                return Err(cx.err(
                    K::ShapeKeys,
                    sp(g),
                    &format!("{path}.grid"),
                    "a probe has both `line` and `grid`",
                    "give one of them per probe",
                ))
            }
            (None, None) => {
                return Err(cx.err(
                    K::MissingKey,
                    sp(p),
                    &path,
                    "a probe needs `line` or `grid`",
                    "add line = { from = [..], to = [..], points = N } or \
                     grid = { min = [..], max = [..], points = [nx, ny] }",
                ))
            }
        };
        probes.push(Probe { name, kind });
    }

    // [[sweep]]
    let mut sweeps: Vec<Sweep> = Vec::new();
    for (i, s) in raw.sweeps.iter().enumerate() {
        sweeps.push(resolve_sweep(&cx, s, &format!("sweep[{i}]"), &sweeps)?);
    }

    if conductors.is_empty() && coils.is_empty() && background.is_none() {
        return Err(cx.err(
            K::MissingKey,
            sp(&raw.model),
            "conductor",
            "the case has no source of field: no [[conductor]], no [[coil]] and no [background]",
            "add a [[conductor]] with a current, a [[coil]] (its inductance is computed even \
             when it carries no current), or a [background] field",
        ));
    }
    let case = Case {
        title,
        symmetry,
        frequency,
        depth,
        element_order,
        accuracy,
        max_triangles,
        uniform_refinement,
        length_unit_m: cx.unit,
        parameters: cx.params.clone(),
        domain,
        background,
        materials,
        parts,
        conductors,
        coils,
        circuit,
        probes,
        sweeps,
    };
    check_mesh_size(&cx, raw, &case)?;
    Ok(case)
}

/// Refuses a case whose estimated mesh exceeds [`MAX_ESTIMATED_TRIANGLES`], pointing at the
/// mesh size of the entry that contributes most.
fn check_mesh_size(cx: &Ctx<'_>, raw: &RawCase, case: &Case) -> Result<()> {
    use super::summary::Share;
    let shares = super::summary::element_shares(case);
    let total: f64 = shares.iter().map(|s| s.1).sum();
    if total.is_finite() && total <= MAX_ESTIMATED_TRIANGLES {
        return Ok(());
    }
    let (who, _) = shares
        .iter()
        .fold((Share::Air, f64::NEG_INFINITY), |best, s| {
            if s.1 > best.1 {
                *s
            } else {
                best
            }
        });
    let own = match who {
        Share::Air => None,
        Share::Part(i) => raw.parts[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("part[{i}].mesh_size"))),
        Share::Conductor(i) => raw.conductors[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("conductor[{i}].mesh_size"))),
        Share::Coil(i) => raw.coils[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("coil[{i}].mesh_size"))),
    };
    let (span, key) = own.unwrap_or_else(|| {
        (
            raw.domain.get_ref().mesh_size.span(),
            "domain.mesh_size".to_string(),
        )
    });
    Err(cx.err(
        K::OutOfRange,
        Some(span),
        &key,
        format!(
            "this mesh size would give about {} triangles, more than the {} a case may ask for",
            fmt_g(total.round()),
            fmt_g(MAX_ESTIMATED_TRIANGLES)
        ),
        format!(
            "use a larger mesh size or a smaller domain (lengths are in {}: check \
             `model.length_unit`)",
            cx.unit_name
        ),
    ))
}

fn resolve_domain(cx: &Ctx<'_>, raw: &RawCase) -> Result<Domain> {
    let d = raw.domain.get_ref();
    let (shape, span) = cx.shape(d.shape_keys(), "domain", raw.domain.span(), "the domain")?;
    let shape = match shape {
        Shape::Rect { mut min, max } => {
            if cx.axisym {
                if max[0] <= 0.0 {
                    return Err(cx.err(
                        K::Axisymmetry,
                        Some(span),
                        "domain.rect",
                        "the domain lies wholly at r < 0",
                        "axisymmetric coordinates are [r, z] with r >= 0: start the domain at r = 0",
                    ));
                }
                // The part at r < 0 is not modelled: clip at the axis.
                min[0] = min[0].max(0.0);
            }
            Shape::Rect { min, max }
        }
        Shape::Circle { center, radius } => {
            if cx.axisym && center[0] != 0.0 {
                return Err(cx.err(
                    K::Axisymmetry,
                    Some(span),
                    "domain.circle.center",
                    "an axisymmetric circle domain must be centred on the axis (r = 0)",
                    "use center = [0, z] (the model is the half disk at r >= 0), or a rect",
                ));
            }
            Shape::Circle { center, radius }
        }
        _ => {
            return Err(cx.err(
                K::ShapeKeys,
                Some(span),
                "domain",
                "the domain must be a rect or a circle",
                "use rect = { min = [..], max = [..] } or circle = { center = [..], radius = R }",
            ))
        }
    };
    let boundary = match d.boundary.as_ref().map(|b| *b.get_ref()) {
        None | Some(RawBoundary::Open) => BoundaryKind::Open,
        Some(RawBoundary::Fixed) => BoundaryKind::Fixed,
    };
    let mesh_size = cx.pos_len(&d.mesh_size, "domain.mesh_size", "the mesh size")?;
    let mut edges: Vec<(DomainSide, EdgeKind)> = Vec::new();
    for (i, e) in raw.edges.iter().enumerate() {
        let key = format!("edge[{i}].side");
        let ev = e.get_ref();
        let side = match ev.side.get_ref() {
            RawSide::Left => DomainSide::Left,
            RawSide::Right => DomainSide::Right,
            RawSide::Bottom => DomainSide::Bottom,
            RawSide::Top => DomainSide::Top,
        };
        let Shape::Rect { min, .. } = &shape else {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "edge conditions apply only to a rect domain",
                "use a rect domain, or remove this [[edge]]",
            ));
        };
        if cx.axisym && side == DomainSide::Left && min[0] <= 0.0 {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "the left side of this axisymmetric domain is the axis (r = 0)",
                "the axis takes no condition (A = 0 there): remove this [[edge]]",
            ));
        }
        if edges.iter().any(|(s, _)| *s == side) {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "this side already has an edge condition",
                "give each side at most one [[edge]]",
            ));
        }
        let kind = match ev.condition.get_ref() {
            RawEdgeCondition::FluxNormal => EdgeKind::FluxNormal,
            RawEdgeCondition::FluxParallel => EdgeKind::FluxParallel,
        };
        edges.push((side, kind));
    }
    if let (BoundaryKind::Open, Shape::Rect { min, max }) = (boundary, &shape) {
        // The open boundary is a disk cut along at most one line per direction (build.rs).
        for (a, b) in [
            (DomainSide::Left, DomainSide::Right),
            (DomainSide::Bottom, DomainSide::Top),
        ] {
            let has = |s| edges.iter().any(|e| e.0 == s);
            if has(a) && has(b) {
                let j = edges
                    .iter()
                    .rposition(|e| e.0 == a || e.0 == b)
                    .unwrap_or(0);
                return Err(cx.err(
                    K::BadEdge,
                    sp(&raw.edges[j].get_ref().side),
                    &format!("edge[{j}].side"),
                    format!(
                        "with boundary = \"open\", the {} and {} sides cannot both take an \
                         edge condition",
                        side_name(a),
                        side_name(b)
                    ),
                    "model one half and leave the other side open, or use boundary = \"fixed\"",
                ));
            }
        }
        if cx.axisym && min[0] > 1e-12 * (max[0] - min[0]) {
            let min_span = d
                .rect
                .as_ref()
                .and_then(|r| r.get_ref().min.as_ref())
                .map_or(span.clone(), |m| m.span());
            return Err(cx.err(
                K::Axisymmetry,
                Some(min_span),
                "domain.rect.min",
                format!(
                    "with boundary = \"open\", an axisymmetric domain must start at the axis; \
                     this one starts at r = {}",
                    cx.show(min[0])
                ),
                "start the rect at r = 0, or use boundary = \"fixed\" to leave the axis out",
            ));
        }
    }
    Ok(Domain {
        shape,
        boundary,
        mesh_size,
        edges,
    })
}

/// Reads a two-column CSV B-H curve (H A/m, B T), relative to the case file, and checks it
/// like `bh`.
fn read_bh_file(cx: &Ctx<'_>, f: &Spanned<String>, key: &str) -> Result<Vec<[f64; 2]>> {
    let base = Path::new(&cx.src.name)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let path = base.join(f.get_ref());
    let text = std::fs::read_to_string(&path).map_err(|e| {
        cx.err(
            K::Io,
            sp(f),
            key,
            format!("cannot read the B-H file {}: {e}", path.display()),
            "give the path relative to the case file",
        )
    })?;
    let mut pts: Vec<[f64; 2]> = Vec::new();
    for (n, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let cols: Vec<&str> = line.split([',', ';', '\t']).map(str::trim).collect();
        let nums: Option<Vec<f64>> = cols.iter().take(2).map(|c| c.parse().ok()).collect();
        match nums {
            Some(v) if v.len() == 2 && v.iter().all(|x| x.is_finite()) => pts.push([v[0], v[1]]),
            _ if pts.is_empty() && n == 0 => continue, // a header line
            _ => {
                return Err(cx.err(
                    K::WrongType,
                    sp(f),
                    key,
                    format!(
                        "{} line {}: expected two numbers, H (A/m) and B (T)",
                        path.display(),
                        n + 1
                    ),
                    "write one point per line as H,B",
                ))
            }
        }
    }
    let ok = pts.len() >= 3
        && pts[0] == [0.0, 0.0]
        && pts
            .windows(2)
            .all(|w| w[1][0] > w[0][0] && w[1][1] > w[0][1]);
    if !ok {
        return Err(cx.err(
            K::OutOfRange,
            sp(f),
            key,
            format!(
                "the B-H curve in {} must start at 0,0 and have at least 3 points with H and B strictly increasing",
                path.display()
            ),
            "fix the file",
        ));
    }
    Ok(pts)
}

fn resolve_bh(cx: &Ctx<'_>, curve: &Spanned<Vec<Pt>>, key: &str) -> Result<Vec<[f64; 2]>> {
    let mut pts: Vec<[f64; 2]> = Vec::new();
    for (i, p) in curve.get_ref().iter().enumerate() {
        let [h, b] = &p.get_ref().0;
        let q = [
            cx.num(h, &format!("{key}[{i}][0]"))?,
            cx.num(b, &format!("{key}[{i}][1]"))?,
        ];
        let bad_order = pts.last().is_some_and(|l| q[0] <= l[0] || q[1] <= l[1]);
        if q[0] < 0.0 || q[1] < 0.0 || bad_order {
            return Err(cx.err(
                K::OutOfRange,
                sp(p),
                &format!("{key}[{i}]"),
                "B-H points must have H >= 0 and B >= 0, both strictly increasing",
                "list the curve as [[H A/m, B T], ...] from the origin upwards",
            ));
        }
        pts.push(q);
    }
    if pts.len() < 3 {
        return Err(cx.err(
            K::OutOfRange,
            sp(curve),
            key,
            format!("a B-H curve needs at least 3 points (got {})", pts.len()),
            "list the curve as [[0, 0], [H A/m, B T], ...] from the origin upwards",
        ));
    }
    if pts[0] != [0.0, 0.0] {
        return Err(cx.err(
            K::OutOfRange,
            sp(curve),
            &format!("{key}[0]"),
            "a B-H curve must start at the origin",
            "make the first point [0, 0]",
        ));
    }
    Ok(pts)
}

fn resolve_coil(
    cx: &Ctx<'_>,
    c: &Spanned<RawCoil>,
    path: &str,
    name: String,
    domain: &Domain,
    carriers: &mut Vec<Carrier>,
) -> Result<Coil> {
    let v = c.get_ref();
    let turns = cx.positive(&v.turns, &format!("{path}.turns"), "the number of turns")?;
    let wire = match (&v.wire, &v.wire_diameter) {
        (Some(w), None) => {
            let g = w.get_ref().trim();
            let Some(n) = wire::parse_gauge(g) else {
                return Err(cx.err(
                    K::UnknownGauge,
                    sp(w),
                    &format!("{path}.wire"),
                    format!("unknown wire gauge \"{g}\""),
                    format!(
                        "write \"awgNN\" with NN from {} to {}, e.g. \"awg30\", or give \
                         wire_diameter (bare copper, in length units)",
                        wire::AWG_MIN,
                        wire::AWG_MAX
                    ),
                ));
            };
            Wire {
                awg: Some(n),
                diameter: wire::awg_diameter_m(n),
            }
        }
        (None, Some(d)) => Wire {
            awg: None,
            diameter: cx.pos_len(d, &format!("{path}.wire_diameter"), "the wire diameter")?,
        },
        (Some(_), Some(d)) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(d),
                &format!("{path}.wire_diameter"),
                "a coil has both `wire` and `wire_diameter`",
                "give one of them",
            ))
        }
        (None, None) => {
            return Err(cx.err(
                K::MissingKey,
                sp(&v.name),
                &format!("{path}.wire"),
                "a coil needs `wire` (\"awgNN\") or `wire_diameter`",
                "add wire = \"awg30\" or wire_diameter = 0.25 (length units)",
            ))
        }
    };
    let fill_factor = match &v.fill_factor {
        None => DEFAULT_FILL_FACTOR,
        Some(f) => {
            let x = cx.num(f, &format!("{path}.fill_factor"))?;
            if !(x > 0.0 && x <= 1.0) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(f),
                    &format!("{path}.fill_factor"),
                    format!("the fill factor must be in (0, 1] (got {x})"),
                    "it is copper area / window area: typically 0.5 to 0.7 for round wire",
                ));
            }
            x
        }
    };
    let temperature_c = match &v.temperature {
        None => DEFAULT_TEMPERATURE_C,
        Some(t) => {
            let x = cx.num(t, &format!("{path}.temperature"))?;
            if x <= -273.15 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(t),
                    &format!("{path}.temperature"),
                    format!("the temperature {x} °C is below absolute zero"),
                    "give the winding temperature in °C",
                ));
            }
            x
        }
    };
    let current = v
        .current
        .as_ref()
        .map_or(Ok(0.0), |x| cx.num(x, &format!("{path}.current")))?;
    let phase_deg = v
        .phase
        .as_ref()
        .map_or(Ok(0.0), |x| cx.num(x, &format!("{path}.phase")))?;
    let mesh_size = cx.opt_mesh_size(&v.mesh_size, &format!("{path}.mesh_size"))?;

    let keys = v.shape_keys();
    let has_shape = keys.rect.is_some()
        || keys.circle.is_some()
        || keys.ellipse.is_some()
        || keys.annulus.is_some()
        || keys.polygon.is_some();
    // (shape, span, key path) per side, plus the sense.
    let mut windows: Vec<(Shape, Range<usize>, String, f64)> = Vec::new();
    match (&v.sides, has_shape) {
        (Some(sides), true) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(sides),
                &format!("{path}.sides"),
                "a coil has both a shape key and `sides`",
                "give one window shape (axisymmetric) or `sides` (planar), not both",
            ))
        }
        (None, true) => {
            if !cx.axisym {
                let (_, span) = cx.shape(keys, path, c.span(), "the coil")?;
                return Err(cx.err(
                    K::ShapeKeys,
                    Some(span),
                    path,
                    "a planar coil needs `sides` (the go and return sides), not one window",
                    "write sides = [ { rect = { ... }, sense = 1 }, { rect = { ... }, sense = -1 } ]",
                ));
            }
            let (shape, span) = cx.shape(keys, path, c.span(), "the coil")?;
            windows.push((shape, span, path.to_string(), 1.0));
        }
        (Some(sides), false) => {
            if sides.get_ref().is_empty() {
                return Err(cx.err(
                    K::ShapeKeys,
                    sp(sides),
                    &format!("{path}.sides"),
                    "`sides` is empty",
                    "give the go and return sides, each with a shape and sense = 1 or -1",
                ));
            }
            for (j, s) in sides.get_ref().iter().enumerate() {
                let sk = format!("{path}.sides[{j}]");
                let sv = s.get_ref();
                let (shape, span) = cx.shape(sv.shape_keys(), &sk, s.span(), "the coil side")?;
                let sense = cx.num(&sv.sense, &format!("{sk}.sense"))?;
                if sense != 1.0 && sense != -1.0 {
                    return Err(cx.err(
                        K::OutOfRange,
                        sp(&sv.sense),
                        &format!("{sk}.sense"),
                        format!("the sense must be 1 or -1 (got {sense})"),
                        "1 for current going in, -1 for current coming back",
                    ));
                }
                windows.push((shape, span, sk, sense));
            }
            let both = windows.iter().any(|w| w.3 > 0.0) && windows.iter().any(|w| w.3 < 0.0);
            if !(cx.axisym || both) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(sides),
                    &format!("{path}.sides"),
                    "a planar coil needs at least one side with sense = 1 and one with sense = -1",
                    "the turns go in through one side and come back through the other",
                ));
            }
        }
        (None, false) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(c),
                path,
                "the coil has no window",
                if cx.axisym {
                    "give one window shape, e.g. rect = { min = [r0, z0], max = [r1, z1] }"
                } else {
                    "give sides = [ { rect = { ... }, sense = 1 }, { rect = { ... }, sense = -1 } ]"
                },
            ))
        }
    }
    for (shape, span, key, _) in &windows {
        cx.check_placement(shape, span, key, domain)?;
        cx.check_overlap(shape, span, key, carriers)?;
        carriers.push(Carrier {
            shape: shape.clone(),
            span: span.clone(),
            key: key.clone(),
            name: name.clone(),
        });
    }
    // Does the copper fit? All the turns pass through every side.
    let copper = turns * std::f64::consts::PI * wire.diameter * wire.diameter / 4.0;
    let (smallest, _) = windows
        .iter()
        .map(|w| (geom::area(&w.0, cx.axisym), w))
        .fold((f64::INFINITY, None), |acc, (a, w)| {
            if a < acc.0 {
                (a, Some(w))
            } else {
                acc
            }
        });
    if copper > fill_factor * smallest {
        let u2 = cx.unit * cx.unit;
        let fit = wire::turns_that_fit(smallest, wire.diameter, fill_factor).floor();
        return Err(cx.err(
            K::WindingDoesNotFit,
            sp(&v.turns),
            &format!("{path}.turns"),
            format!(
                "{} turns of {} mm wire need {} {}² of copper, but the window holds only \
                 {} × {} {}² = {} {}²",
                fmt_g(turns),
                fmt_g(wire.diameter * 1e3),
                fmt_g(copper / u2),
                cx.unit_name,
                fmt_g(fill_factor),
                fmt_g(smallest / u2),
                cx.unit_name,
                fmt_g(fill_factor * smallest / u2),
                cx.unit_name
            ),
            format!(
                "at most {} turns fit: use fewer turns, thinner wire, a larger window or a \
                 higher fill_factor",
                fmt_g(fit)
            ),
        ));
    }
    let window = if v.sides.is_some() {
        CoilWindow::Sides(windows.into_iter().map(|w| (w.0, w.3)).collect())
    } else {
        CoilWindow::Single(windows.remove(0).0)
    };
    Ok(Coil {
        name,
        turns,
        wire,
        fill_factor,
        temperature_c,
        current,
        phase_deg,
        window,
        mesh_size,
    })
}

fn resolve_circuit(cx: &Ctx<'_>, c: &Spanned<RawCircuit>, coils: &[Coil]) -> Result<Circuit> {
    let v = c.get_ref();
    let coil = match &v.coil {
        Some(n) => {
            if !coils.iter().any(|k| &k.name == n.get_ref()) {
                let help = match nearest(n.get_ref(), coils.iter().map(|k| k.name.as_str())) {
                    Some(s) => format!("did you mean \"{s}\"?"),
                    None => "name one of the [[coil]] entries".into(),
                };
                return Err(cx.err(
                    K::UnknownKey,
                    sp(n),
                    "circuit.coil",
                    format!("no coil is named \"{}\"", n.get_ref()),
                    help,
                ));
            }
            n.get_ref().clone()
        }
        None => {
            let open: Vec<&Coil> = coils.iter().filter(|k| k.current == 0.0).collect();
            match (coils.len(), open.len()) {
                (0, _) => {
                    return Err(cx.err(
                        K::MissingKey,
                        sp(c),
                        "circuit",
                        "[circuit] is given but the case has no [[coil]]",
                        "add a coil, or remove [circuit]",
                    ))
                }
                (1, _) => coils[0].name.clone(),
                (_, 1) => open[0].name.clone(),
                _ => {
                    return Err(cx.err(
                        K::MissingKey,
                        sp(c),
                        "circuit.coil",
                        "several coils could own [circuit]",
                        "add coil = \"NAME\" to [circuit]",
                    ))
                }
            }
        }
    };
    let tuning = match v.tuning.as_ref().map(|t| *t.get_ref()) {
        None | Some(RawTuning::None) => Tuning::None,
        Some(RawTuning::Series) => Tuning::Series,
        Some(RawTuning::Parallel) => Tuning::Parallel,
    };
    let load = match &v.load {
        None => Load::Matched,
        Some(l) if matches!(l.get_ref(), Num::Expr(s) if s.trim() == "matched") => Load::Matched,
        Some(l) => Load::Resistance(cx.positive(l, "circuit.load", "the load resistance")?),
    };
    let storage = match &v.storage {
        None => None,
        Some(s) => {
            let sv = s.get_ref();
            Some(Storage {
                capacitance: cx.positive(
                    &sv.capacitance,
                    "circuit.storage.capacitance",
                    "the capacitance",
                )?,
                voltage: cx.positive(&sv.voltage, "circuit.storage.voltage", "the voltage")?,
            })
        }
    };
    Ok(Circuit {
        coil,
        tuning,
        load,
        storage,
    })
}

fn resolve_sweep(
    cx: &Ctx<'_>,
    s: &Spanned<RawSweep>,
    path: &str,
    earlier: &[Sweep],
) -> Result<Sweep> {
    let v = s.get_ref();
    let p = v.parameter.get_ref();
    let key = format!("{path}.parameter");
    if !cx.params.contains_key(p) {
        let help = match nearest(p, cx.params.keys().map(String::as_str)) {
            Some(m) => format!("did you mean `{m}`? A sweep varies a [parameters] entry"),
            None => format!("add `{p} = ...` to [parameters] and use it in the geometry"),
        };
        return Err(cx.err(
            K::BadSweep,
            sp(&v.parameter),
            &key,
            format!("`{p}` is not in [parameters]"),
            help,
        ));
    }
    if earlier.iter().any(|e| &e.parameter == p) {
        return Err(cx.err(
            K::DuplicateName,
            sp(&v.parameter),
            &key,
            format!("`{p}` is already swept by an earlier [[sweep]]"),
            "give its values in one [[sweep]] entry",
        ));
    }
    let values = match (&v.values, &v.from, &v.to, &v.steps) {
        (Some(vals), None, None, None) => {
            if vals.get_ref().is_empty() {
                return Err(cx.err(
                    K::BadSweep,
                    sp(vals),
                    &format!("{path}.values"),
                    "the sweep has no values",
                    "list at least one value",
                ));
            }
            let mut out = Vec::new();
            for (i, x) in vals.get_ref().iter().enumerate() {
                out.push(cx.num(x, &format!("{path}.values[{i}]"))?);
            }
            out
        }
        (None, Some(from), Some(to), Some(steps)) => {
            let a = cx.num(from, &format!("{path}.from"))?;
            let b = cx.num(to, &format!("{path}.to"))?;
            let n = cx.count(steps, &format!("{path}.steps"), 2, "the number of steps")?;
            (0..n)
                .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
                .collect()
        }
        _ => {
            return Err(cx.err(
                K::BadSweep,
                sp(s),
                path,
                "a sweep needs `values`, or all of `from`, `to` and `steps` (not both forms)",
                "write values = [50, 100, 150] or from = 50, to = 200, steps = 7 \
                 (steps = number of values, both ends included)",
            ))
        }
    };
    let group = v.group.as_ref().map(|g| g.get_ref().clone());
    if let (Some(g), Some(gs)) = (&group, &v.group) {
        if let Some(e) = earlier.iter().find(|e| e.group.as_ref() == Some(g)) {
            if e.values.len() != values.len() {
                return Err(cx.err(
                    K::BadSweep,
                    sp(gs),
                    &format!("{path}.group"),
                    format!(
                        "group `{g}` moves its parameters together, but `{}` has {} values and `{p}` has {}",
                        e.parameter,
                        e.values.len(),
                        values.len()
                    ),
                    "give every sweep of a group the same number of values",
                ));
            }
        }
    }
    Ok(Sweep {
        parameter: p.clone(),
        values,
        group,
    })
}
