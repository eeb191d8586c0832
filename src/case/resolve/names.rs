//! The names parts, conductors and coils share: each must be given and distinct.

use std::collections::BTreeMap;
use std::ops::Range;

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;

/// The entity names seen so far, each with its key path (`part[0]`) and span.
#[derive(Default)]
pub(super) struct Names {
    seen: BTreeMap<String, (String, Range<usize>)>,
}

impl Names {
    /// The trimmed name under `key` (`part[0].name`), refused when empty or already used.
    pub(super) fn check(&mut self, cx: &Ctx<'_>, n: &Spanned<String>, key: &str) -> Result<String> {
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
        if let Some((first, r)) = self.seen.get(name) {
            let (line, _) = crate::case::error::line_col_of(&cx.src.text, r.start);
            return Err(cx.err(
                K::DuplicateName,
                sp(n),
                key,
                format!("the name \"{name}\" is already used by `{first}` (line {line})"),
                "parts, conductors and coils need distinct names: rename one",
            ));
        }
        self.seen.insert(
            name.to_string(),
            (key.trim_end_matches(".name").to_string(), n.span()),
        );
        Ok(name.to_string())
    }
}
