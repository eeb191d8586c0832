//! Round copper magnet wire: AWG diameters, resistance, mass, enamel build and how many turns
//! fit a window. Pure functions in SI units (metres, ohms, kilograms).
//!
//! Sources: AWG bare diameters from ASTM B258, d = 0.127 mm · 92^((36 − n)/39); copper
//! resistivity 1.7241e-8 Ω·m at 20 °C (IEC 60028, annealed copper standard); temperature
//! coefficient 0.00393 /K and density 8.89 g/cm³ are values from memory (docs/references.md
//! marks them [memory]). The enamel build formula is an approximation from memory, see
//! [`overall_diameter`].
//!
//! ```
//! use fluxpick_postproc::wire;
//! let d = wire::awg_diameter_m(wire::parse_gauge("awg30").unwrap());
//! assert!((d - 0.25464e-3).abs() < 1e-8);
//! let r = wire::resistance_per_metre(d, 20.0); // Ω/m
//! assert!((r - 0.33855).abs() < 1e-4);
//! ```

use std::f64::consts::PI;

/// Smallest AWG number accepted (thickest wire).
pub const AWG_MIN: u32 = 10;
/// Largest AWG number accepted (thinnest wire).
pub const AWG_MAX: u32 = 44;
/// Copper resistivity at 20 °C, Ω·m (IEC 60028).
pub const COPPER_RESISTIVITY_20C: f64 = 1.7241e-8;
/// Temperature coefficient of copper's resistivity at 20 °C, 1/K (value from memory).
pub const COPPER_TEMP_COEFF: f64 = 0.00393;
/// Copper density, kg/m³ (8.89 g/cm³, value from memory).
pub const COPPER_DENSITY: f64 = 8890.0;

/// Bare diameter of AWG `n`, m (ASTM B258). Defined for any `n`; the case format accepts
/// [`AWG_MIN`]..=[`AWG_MAX`].
pub fn awg_diameter_m(n: u32) -> f64 {
    0.127e-3 * 92f64.powf((36.0 - n as f64) / 39.0)
}

/// `"awg30"` (any letter case, surrounding spaces ignored) → `Some(30)`; `None` when the text
/// is malformed (`"awg3x"`, `"30"`, `"awg"`) or the number is outside AWG 10..=44.
pub fn parse_gauge(s: &str) -> Option<u32> {
    let s = s.trim();
    let digits = s
        .get(..3)
        .filter(|p| p.eq_ignore_ascii_case("awg"))
        .map(|_| &s[3..])?;
    if digits.is_empty() || digits.len() > 3 || !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let n: u32 = digits.parse().ok()?;
    (AWG_MIN..=AWG_MAX).contains(&n).then_some(n)
}

/// Copper resistivity at `temp_c` °C, Ω·m, linear in temperature about 20 °C.
pub fn resistivity(temp_c: f64) -> f64 {
    COPPER_RESISTIVITY_20C * (1.0 + COPPER_TEMP_COEFF * (temp_c - 20.0))
}

/// DC resistance per metre of round copper wire of bare diameter `d` (m) at `temp_c` °C, Ω/m.
pub fn resistance_per_metre(d: f64, temp_c: f64) -> f64 {
    resistivity(temp_c) / (PI * d * d / 4.0)
}

/// Copper mass per metre of wire of bare diameter `d` (m), kg/m.
pub fn mass_per_metre(d: f64) -> f64 {
    COPPER_DENSITY * PI * d * d / 4.0
}

/// Enamel insulation build.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Grade {
    /// Thin build ("single").
    Grade1,
    /// Medium build ("heavy"), the usual choice for pickup coils.
    Grade2,
}

/// Approximate largest overall (enamelled) diameter, m, for bare diameter `d` (m).
///
/// The increase over the bare diameter is taken as 0.07 mm · (d / 1 mm)^0.6 for grade 1 and
/// 1.5 times that for grade 2: a fit, made from memory, to the maximum overall diameters of
/// the usual enamelled-wire tables between 0.1 and 1 mm (e.g. 0.25 mm bare: about 0.281 mm
/// grade 1, 0.297 mm grade 2). Expect it within about 15 % of the build; use a
/// manufacturer's figure when it matters.
pub fn overall_diameter(d: f64, grade: Grade) -> f64 {
    let grade1 = 0.07e-3 * (d / 1e-3).powf(0.6);
    d + match grade {
        Grade::Grade1 => grade1,
        Grade::Grade2 => 1.5 * grade1,
    }
}

/// How many turns of wire of diameter `d` (m) fit a window of `window_area` (m²) when the
/// wire's circular cross-sections may fill `fill_factor` of it: fill · A / (π d² / 4).
/// With the bare diameter and a copper fill factor this is the case file's winding check;
/// with the overall diameter and a packing factor (≈ 0.78 for orthocyclic, less for random
/// winding; common practice, no source) it estimates what a bobbin holds. Not rounded.
pub fn turns_that_fit(window_area: f64, d: f64, fill_factor: f64) -> f64 {
    fill_factor * window_area / (PI * d * d / 4.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// ASTM B258 diameters and IEC 60028 resistance at 20 °C, from docs/references.md.
    const TABLE: [(u32, f64, f64); 4] = [
        (24, 0.51056e-3, 0.084213),
        (28, 0.32109e-3, 0.212916),
        (30, 0.25464e-3, 0.338550),
        (36, 0.12700e-3, 1.36102),
    ];

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn awg_diameters_match_astm_b258_table() {
        for (n, d, _) in TABLE {
            assert!(
                rel(awg_diameter_m(n), d) < 5e-4,
                "AWG {n}: {}",
                awg_diameter_m(n)
            );
        }
    }

    #[test]
    fn resistance_matches_table_at_20c() {
        for (n, _, r) in TABLE {
            let got = resistance_per_metre(awg_diameter_m(n), 20.0);
            assert!(rel(got, r) < 5e-4, "AWG {n}: {got}");
        }
    }

    #[test]
    fn resistance_rises_with_temperature() {
        // 0.00393 /K [value from memory]: +80 K gives a factor 1.3144.
        let d = awg_diameter_m(30);
        let ratio = resistance_per_metre(d, 100.0) / resistance_per_metre(d, 20.0);
        assert!((ratio - 1.3144).abs() < 1e-9);
        // At 75 °C (a warm enclosure): 1 + 0.00393 · 55 = 1.21615 times the table's
        // 0.338550 Ω/m for AWG 30 at 20 °C.
        let r75 = resistance_per_metre(d, 75.0);
        assert!((r75 / resistance_per_metre(d, 20.0) - 1.21615).abs() < 1e-9);
        assert!(rel(r75, 0.338550 * 1.21615) < 5e-4, "{r75}");
    }

    #[test]
    fn parse_gauge_accepts_only_awg_10_to_44() {
        assert_eq!(parse_gauge("awg30"), Some(30));
        assert_eq!(parse_gauge("AWG10"), Some(10));
        assert_eq!(parse_gauge(" awg44 "), Some(44));
        for bad in [
            "awg9", "awg45", "awg3x", "awg", "30", "awg-30", "awg 30", "awg30.5", "",
        ] {
            assert_eq!(parse_gauge(bad), None, "{bad:?}");
        }
    }

    #[test]
    fn mass_per_metre_of_awg30() {
        // 8.89 g/cm³ [value from memory] × π (0.25464 mm)²/4 = 0.45274 g/m.
        assert!(rel(mass_per_metre(0.25464e-3), 0.45274e-3) < 1e-4);
    }

    #[test]
    fn enamel_build_is_positive_and_grade2_thicker() {
        let d = 0.25e-3;
        let g1 = overall_diameter(d, Grade::Grade1);
        let g2 = overall_diameter(d, Grade::Grade2);
        // The fit's own anchor values (from memory): about 0.281 and 0.297 mm at 0.25 mm bare.
        assert!((g1 - 0.281e-3).abs() < 0.005e-3, "{g1}");
        assert!((g2 - 0.297e-3).abs() < 0.005e-3, "{g2}");
        assert!(g2 > g1 && g1 > d);
    }

    #[test]
    fn turns_that_fit_is_area_ratio() {
        // 1 mm² window, 0.5 fill, 0.1 mm wire: 0.5 / (π·0.0025) = 63.66 turns.
        let n = turns_that_fit(1e-6, 0.1e-3, 0.5);
        assert!((n - 0.5 / (PI * 0.0025)).abs() < 1e-9);
    }
}
