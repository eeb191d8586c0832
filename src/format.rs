//! Numbers for people: engineering notation with SI prefixes, durations, error bars.

/// A duration in the unit a person would use: s, min, h or days.
pub fn duration(t: f64) -> String {
    if t < 120.0 {
        eng(t, "s")
    } else if t < 7200.0 {
        format!("{:.1} min", t / 60.0)
    } else if t < 172_800.0 {
        format!("{:.1} h", t / 3600.0)
    } else {
        format!("{:.1} days", t / 86_400.0)
    }
}

/// Engineering notation with SI prefix: `eng(2.5e-5, "H")` = "25.0 µH".
pub fn eng(v: f64, unit: &str) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v} {unit}");
    }
    const P: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let a = v.abs();
    let (s, p) = P
        .iter()
        .find(|(s, _)| a >= *s * 0.999_5)
        .copied()
        .unwrap_or((1e-15, "f"));
    let x = v / s;
    let digits = if x.abs() >= 100.0 {
        1
    } else if x.abs() >= 10.0 {
        2
    } else {
        3
    };
    format!("{x:.digits$} {p}{unit}")
}

/// " ± x %" for an estimated relative error (empty without one).
pub fn pm(err: Option<f64>) -> String {
    match err {
        Some(e) if e >= 0.01 => format!(" ± {:.1} %", 100.0 * e),
        Some(e) if e >= 1e-4 => format!(" ± {:.2} %", 100.0 * e),
        Some(e) => format!(" ± {:.0e} %", 100.0 * e),
        None => String::new(),
    }
}
