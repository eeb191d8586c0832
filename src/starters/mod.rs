//! Starter cases for `fluxpick new KIND`: commented case files for the common jobs, kept as
//! TOML text beside this file and embedded in the binary. Each one runs as written
//! (`tests/starters.rs` checks, solves and sanity-checks every one) and its comments say what
//! to change.

/// One starter case.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Starter {
    /// The KIND of `fluxpick new KIND`.
    pub kind: &'static str,
    /// One line for `fluxpick new --help` and the guide.
    pub about: &'static str,
    /// The case file, comments and all.
    pub text: &'static str,
}

/// Every starter, in the order `fluxpick new --help` lists them.
pub const STARTERS: &[Starter] = &[
    Starter {
        kind: "rod",
        about: "a ferrite-rod pickup characterised in a uniform field (axisymmetric)",
        text: include_str!("rod.toml"),
    },
    Starter {
        kind: "feeder",
        about: "a pickup beside a go-and-return feeder pair (planar)",
        text: include_str!("feeder.toml"),
    },
    Starter {
        kind: "three-phase",
        about: "a pickup beside a three-phase busbar set near a steel wall (planar, eddy currents)",
        text: include_str!("three-phase.toml"),
    },
    Starter {
        kind: "coaxial",
        about: "two coaxial coils for 50/60 Hz power transfer (axisymmetric)",
        text: include_str!("coaxial.toml"),
    },
];

/// The starter of a kind.
pub fn find(kind: &str) -> Option<&'static Starter> {
    STARTERS.iter().find(|s| s.kind == kind)
}
