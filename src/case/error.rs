//! The one error type of case loading: a `miette` diagnostic pointing into the case file.
//!
//! Every error carries the file name and text, the byte span of the offending value or key, a
//! message that names the key path (`part[2].circle.radius`; array indices count from 0, as
//! the entries appear in the file), and a help line saying how to fix it.

use std::fmt;
use std::ops::Range;

use miette::{Diagnostic, NamedSource, SourceSpan};

/// Which rule a case broke; lets callers and tests tell errors apart without parsing text.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CaseErrorKind {
    /// The file could not be read.
    Io,
    /// Not valid TOML.
    Syntax,
    /// A key that the format does not know (or an unknown choice for an enumerated key).
    UnknownKey,
    /// A required key is absent.
    MissingKey,
    /// A value of the wrong type (a string where a table is needed, an array of wrong length).
    WrongType,
    /// More than one shape key (or none) on one entity, or both/neither of two exclusive keys.
    ShapeKeys,
    /// A material name that is neither built in nor in `[materials]`.
    UnknownMaterial,
    /// Two parts/conductors/coils (or probes, or sweeps) with the same name.
    DuplicateName,
    /// A size, radius, mesh size, count or similar that must be positive is not.
    NotPositive,
    /// A value outside its allowed range (fill factor, element order, frequency, sense...).
    OutOfRange,
    /// A shape wholly at r < 0 in an axisymmetric model, or a background field that is not axial.
    Axisymmetry,
    /// A shape whose bounding box is not within the domain.
    OutsideDomain,
    /// An expression names an undefined parameter.
    UndefinedName,
    /// An expression divides by zero or yields a value that is not finite.
    NotFinite,
    /// An expression that does not parse, or parameters that reference each other in a cycle.
    BadExpression,
    /// A coil window that cannot hold its turns at the given gauge and fill factor.
    WindingDoesNotFit,
    /// A wire gauge that is malformed or outside AWG 10..=44.
    UnknownGauge,
    /// A domain edge condition that is not allowed (circle domain, axis side, repeated side).
    BadEdge,
    /// A sweep without values, or over a name that is not a parameter.
    BadSweep,
    /// A polygon with fewer than three points, zero area or crossing edges.
    BadPolygon,
    /// Two current-carrying regions (conductors, coil sides) that share area.
    Overlap,
    /// A parameter override (from a sweep or the command line) that names no parameter.
    UnknownOverride,
}

/// A bad case file, rendered by `miette` with the offending text underlined.
///
/// The details are boxed to keep `Result<_, CaseError>` small; they are reachable by
/// `Deref` (`err.kind`, `err.key`, `err.message`).
#[derive(Debug)]
pub struct CaseError(Box<CaseErrorDetails>);

/// What a [`CaseError`] holds.
#[derive(Debug, Diagnostic)]
pub struct CaseErrorDetails {
    /// Which rule was broken.
    pub kind: CaseErrorKind,
    /// Dotted key path of the offending value (`part[2].circle.radius`), empty when unknown.
    pub key: String,
    /// One-line description (the `Display` text adds the file name and key path).
    pub message: String,
    #[source_code]
    src: NamedSource<String>,
    #[label("{label}")]
    span: Option<SourceSpan>,
    label: String,
    #[help]
    help: Option<String>,
    /// Kept for `line_col` (miette's `NamedSource` does not give the text back cheaply).
    text: String,
    /// Kept for `file_name`.
    file: String,
    /// Byte range in the text, if any.
    range: Option<Range<usize>>,
}

impl std::ops::Deref for CaseError {
    type Target = CaseErrorDetails;
    fn deref(&self) -> &CaseErrorDetails {
        &self.0
    }
}

impl std::ops::DerefMut for CaseError {
    fn deref_mut(&mut self) -> &mut CaseErrorDetails {
        &mut self.0
    }
}

impl fmt::Display for CaseErrorDetails {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.key.is_empty() {
            write!(f, "{}: {}", self.file, self.message)
        } else {
            write!(f, "{}: `{}`: {}", self.file, self.key, self.message)
        }
    }
}

impl std::error::Error for CaseErrorDetails {}

impl fmt::Display for CaseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.0.fmt(f)
    }
}

impl std::error::Error for CaseError {}

impl Diagnostic for CaseError {
    fn help<'a>(&'a self) -> Option<Box<dyn fmt::Display + 'a>> {
        self.0.help()
    }
    fn source_code(&self) -> Option<&dyn miette::SourceCode> {
        self.0.source_code()
    }
    fn labels(&self) -> Option<Box<dyn Iterator<Item = miette::LabeledSpan> + '_>> {
        self.0.labels()
    }
}

impl CaseError {
    /// A new error at `span` (byte range into `text`).
    pub(crate) fn new(
        kind: CaseErrorKind,
        file: &str,
        text: &str,
        span: Option<Range<usize>>,
        key: impl Into<String>,
        message: impl Into<String>,
        help: impl Into<String>,
    ) -> Self {
        let help: String = help.into();
        let span = span.map(|r| {
            // Clamp into the text so that a stray span can never make rendering panic.
            let start = r.start.min(text.len());
            let end = r.end.clamp(start, text.len());
            start..end
        });
        let label = match kind {
            CaseErrorKind::UnknownKey => "not a known key or choice",
            CaseErrorKind::MissingKey => "in this table",
            CaseErrorKind::WrongType => "wrong type",
            CaseErrorKind::Syntax => "here",
            _ => "this value",
        }
        .to_string();
        CaseError(Box::new(CaseErrorDetails {
            kind,
            key: key.into(),
            message: message.into(),
            src: NamedSource::new(file, text.to_string()).with_language("TOML"),
            span: span.clone().map(|r| SourceSpan::from(r.start..r.end)),
            label,
            help: if help.is_empty() { None } else { Some(help) },
            text: text.to_string(),
            file: file.to_string(),
            range: span,
        }))
    }
}

impl CaseErrorDetails {
    /// 1-based line and column (in characters) of the start of the offending text, if known.
    pub fn line_col(&self) -> Option<(usize, usize)> {
        let r = self.range.as_ref()?;
        Some(line_col_of(&self.text, r.start))
    }

    /// The byte range of the offending text, if known.
    pub fn span(&self) -> Option<Range<usize>> {
        self.range.clone()
    }

    /// The file name the error refers to.
    pub fn file_name(&self) -> &str {
        &self.file
    }

    /// The help line, if any.
    pub fn help_text(&self) -> Option<&str> {
        self.help.as_deref()
    }

    /// The error rendered as `miette`'s graphical report without colours (for logs and tests).
    pub fn render_plain(&self) -> String {
        let mut out = String::new();
        let handler =
            miette::GraphicalReportHandler::new_themed(miette::GraphicalTheme::unicode_nocolor())
                .with_width(100);
        if handler.render_report(&mut out, self).is_err() {
            return self.to_string();
        }
        out
    }
}

/// 1-based line and column (in characters) of byte offset `pos` in `text`.
pub fn line_col_of(text: &str, pos: usize) -> (usize, usize) {
    let pos = pos.min(text.len());
    let before = &text[..floor_char_boundary(text, pos)];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let col = before[line_start..].chars().count() + 1;
    (line, col)
}

fn floor_char_boundary(text: &str, mut pos: usize) -> usize {
    while pos > 0 && !text.is_char_boundary(pos) {
        pos -= 1;
    }
    pos
}

/// Edit distance counting insertions, deletions, substitutions and transpositions of
/// neighbouring characters (optimal string alignment), over characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let w = b.len() + 1;
    let mut d = vec![0usize; (a.len() + 1) * w];
    for i in 0..=a.len() {
        d[i * w] = i;
    }
    for (j, x) in d.iter_mut().enumerate().take(w) {
        *x = j;
    }
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut v = (d[(i - 1) * w + j] + 1)
                .min(d[i * w + j - 1] + 1)
                .min(d[(i - 1) * w + j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                v = v.min(d[(i - 2) * w + j - 2] + 1);
            }
            d[i * w + j] = v;
        }
    }
    d[a.len() * w + b.len()]
}

/// The candidate nearest to `word`, if it is close enough to be a plausible typo: an edit
/// distance of at most a third of the longer word's length (at least 1), or `word` being a
/// case-insensitive match.
pub fn nearest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let lower = word.to_lowercase();
    let mut best: Option<(usize, &'a str)> = None;
    for c in candidates {
        let d = edit_distance(&lower, &c.to_lowercase());
        let limit = (word.chars().count().max(c.chars().count()) / 3).max(1);
        let better = match best {
            None => true,
            Some((bd, _)) => d < bd,
        };
        if d <= limit && better {
            best = Some((d, c));
        }
    }
    best.map(|(_, c)| c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_counts_edits() {
        assert_eq!(edit_distance("radius", "radius"), 0);
        assert_eq!(edit_distance("radus", "radius"), 1);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("modle", "model"), 1);
    }

    #[test]
    fn nearest_picks_close_words_only() {
        let keys = ["mesh_size", "material", "name"];
        assert_eq!(nearest("mesh_sise", keys), Some("mesh_size"));
        assert_eq!(nearest("materail", keys), Some("material"));
        assert_eq!(nearest("colour", keys), None);
    }

    #[test]
    fn line_col_counts_from_one() {
        let t = "a = 1\nbb = 2\n";
        assert_eq!(line_col_of(t, 0), (1, 1));
        assert_eq!(line_col_of(t, 6), (2, 1));
        assert_eq!(line_col_of(t, 11), (2, 6));
    }
}
