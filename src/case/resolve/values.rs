//! Values of any table: numbers and expressions over `[parameters]`, lengths in the file's
//! unit, points, counts, and the errors that point at them.

use std::ops::Range;

use toml::Spanned;

use super::{fmt_g, Ctx, Result};
use crate::case::error::{nearest, CaseError, CaseErrorKind as K};
use crate::case::expr::{Expr, ExprErrorKind};
use crate::case::raw::{Num, Pt, SNum};
use crate::case::SourceInfo;

pub(super) fn sp<T>(s: &Spanned<T>) -> Option<Range<usize>> {
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
pub(super) fn eval_expr(
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

impl Ctx<'_> {
    pub(super) fn err(
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
    pub(super) fn num(&self, v: &SNum, key: &str) -> Result<f64> {
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

    pub(super) fn positive(&self, v: &SNum, key: &str, what: &str) -> Result<f64> {
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
    pub(super) fn len(&self, v: &SNum, key: &str) -> Result<f64> {
        Ok(self.num(v, key)? * self.unit)
    }

    /// A positive length in metres.
    pub(super) fn pos_len(&self, v: &SNum, key: &str, what: &str) -> Result<f64> {
        Ok(self.positive(v, key, what)? * self.unit)
    }

    pub(super) fn opt_mesh_size(&self, v: &Option<SNum>, key: &str) -> Result<Option<f64>> {
        v.as_ref()
            .map(|v| self.pos_len(v, key, "the mesh size"))
            .transpose()
    }

    /// A point in metres.
    pub(super) fn point(&self, p: &Pt, key: &str) -> Result<[f64; 2]> {
        let [a, b] = &p.get_ref().0;
        Ok([
            self.len(a, &format!("{key}[0]"))?,
            self.len(b, &format!("{key}[1]"))?,
        ])
    }

    /// A pair of positive lengths in metres.
    pub(super) fn pos_pair(&self, p: &Pt, key: &str, what: &str) -> Result<[f64; 2]> {
        let [a, b] = &p.get_ref().0;
        Ok([
            self.pos_len(a, &format!("{key}[0]"), what)?,
            self.pos_len(b, &format!("{key}[1]"), what)?,
        ])
    }

    /// An integer count `>= min`.
    pub(super) fn count(&self, v: &SNum, key: &str, min: usize, what: &str) -> Result<usize> {
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

    /// A length in metres shown in the file's unit.
    pub(super) fn show(&self, m: f64) -> String {
        format!("{} {}", fmt_g(m / self.unit), self.unit_name)
    }
}
