//! Fuzz target: the case parser and validator on arbitrary text.
//!
//! Every input must end in a `Case` or a `CaseError` that renders (both the plain and the
//! miette report); a valid case is also built into a model, summarised and its sweep points
//! checked. A panic, an abort, a hang or running out of memory is a finding.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match fluxpick::case::parse_str("fuzz.toml", text) {
        Err(e) => {
            let _ = e.render_plain();
            let _ = format!("{:?}", miette::Report::new(e));
        }
        Ok(raw) => {
            let src = fluxpick::case::SourceInfo::new("fuzz.toml", text);
            match fluxpick::case::resolve(&raw, &src, &Default::default()) {
                Err(e) => {
                    let _ = e.render_plain();
                    let _ = format!("{:?}", miette::Report::new(e));
                }
                Ok(case) => {
                    let _ = fluxpick::case::summary(&case);
                    let _ = fluxpick::case::estimated_elements(&case);
                    for e in fluxpick::case::check_sweep_points(&raw, &src, &case) {
                        let _ = e.render_plain();
                    }
                    let _ = fluxpick::sweep::points(&case).len();
                    if let Ok(model) = fluxpick::build::Model::new(&case) {
                        let _ = model.materials(&case);
                        let _ = model.windings(&case);
                    }
                }
            }
        }
    }
});
