//! Circuit figures of a pickup coil: an EMF source V (rms) in series with the coil's
//! resistance R and inductance L, tuned by a capacitor in series or in parallel, delivering
//! power into a resistive load. Textbook AC circuit theory (phasors, Thevenin equivalents;
//! e.g. Nilsson & Riedel, "Electric Circuits"); idealisations are stated per function.

use num_complex::Complex64 as C;

/// How the tuning capacitor is connected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tuning {
    Series,
    Parallel,
    None,
}

/// A pickup coil seen from its terminals: its open-circuit EMF (phasor, V rms) behind its
/// resistance (winding + induced losses, Ω) and inductance (H), at angular frequency ω (rad/s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Source {
    pub emf: C,
    pub omega: f64,
    pub inductance: f64,
    pub resistance: f64,
}

/// The tuning capacitor and where it sits: in series with the coil, across its terminals, or
/// none (`capacitance` is then unused).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Capacitor {
    pub tuning: Tuning,
    /// F.
    pub capacitance: f64,
}

/// Q = ωL/R.
pub fn quality_factor(omega: f64, l: f64, r: f64) -> f64 {
    omega * l / r
}

/// Series tuning capacitor 1/(ω²L): the loop reactance cancels at ω.
pub fn series_capacitance(omega: f64, l: f64) -> f64 {
    1.0 / (omega * omega * l)
}

/// Parallel tuning capacitor L/(R² + ω²L²): the admittance of C in parallel with the R–L
/// branch is real at ω (tends to 1/(ω²L) at high Q).
pub fn parallel_capacitance(omega: f64, l: f64, r: f64) -> f64 {
    l / (r * r + omega * omega * l * l)
}

/// Resonant frequency 1/(2π√(LC)).
pub fn resonant_frequency(l: f64, c: f64) -> f64 {
    1.0 / (std::f64::consts::TAU * (l * c).sqrt())
}

/// Largest power any passive load can take from the coil: |V|²/(4R) (maximum power transfer
/// with the reactance tuned out).
pub fn matched_power(emf: f64, r: f64) -> f64 {
    emf * emf / (4.0 * r)
}

/// Thevenin equivalent (open-circuit voltage, impedance) seen by the load at ω.
pub fn thevenin(tuning: Tuning, omega: f64, emf: f64, l: f64, r: f64, c: f64) -> (C, C) {
    let zl = C::new(r, omega * l);
    let v = C::new(emf, 0.0);
    match tuning {
        Tuning::None => (v, zl),
        Tuning::Series => (v, zl + C::new(0.0, -1.0 / (omega * c))),
        Tuning::Parallel => {
            let zc = C::new(0.0, -1.0 / (omega * c));
            (v * zc / (zl + zc), zl * zc / (zl + zc))
        }
    }
}

/// Power (W) into a resistive load `rl` at ω.
pub fn load_power(tuning: Tuning, omega: f64, emf: f64, l: f64, r: f64, c: f64, rl: f64) -> f64 {
    let (v, z) = thevenin(tuning, omega, emf, l, r, c);
    let i = v / (z + rl);
    i.norm_sqr() * rl
}

/// Voltage across the tuning capacitor at resonance (rms), the safety figure: series tuning
/// with the load shorted gives Q·V; parallel tuning with the load open gives |V Z_C/(Z_L + Z_C)|
/// ≈ Q·V. Either is the worst case the capacitor must be rated for.
pub fn capacitor_voltage(tuning: Tuning, omega: f64, emf: f64, l: f64, r: f64, c: f64) -> f64 {
    match tuning {
        Tuning::None => 0.0,
        Tuning::Series => {
            let z = C::new(r, omega * l - 1.0 / (omega * c));
            (emf / z.norm()) / (omega * c)
        }
        Tuning::Parallel => thevenin(tuning, omega, emf, l, r, c).0.norm(),
    }
}

/// Energy ½CV² to charge a storage capacitor to `voltage`, and the time at a constant power
/// (idealised: a lossless rectifier and converter that keep drawing `power` whatever the
/// capacitor's voltage; a real rectifier charges more slowly).
pub fn charge_time(capacitance: f64, voltage: f64, power: f64) -> (f64, f64) {
    let e = 0.5 * capacitance * voltage * voltage;
    (e, e / power)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::TAU;

    /// docs/references.md, "Resonance": 28.15 H with 250 nF resonates at 59.99443 Hz.
    #[test]
    fn resonance_of_a_rod_coil() {
        let f = resonant_frequency(28.15, 250e-9);
        assert!((f - 59.99443).abs() < 1e-4, "{f}");
        let c = series_capacitance(TAU * 59.99443, 28.15);
        assert!((c - 250e-9).abs() / 250e-9 < 1e-6);
    }

    /// docs/references.md: 1 V rms into a 1 kΩ coil resistance gives 250 µW matched.
    #[test]
    fn matched_power_and_series_resonance() {
        assert!((matched_power(1.0, 1000.0) - 250e-6).abs() < 1e-12);
        // at series resonance a load equal to R takes exactly the matched power
        let (w, l, r) = (TAU * 60.0, 25.0, 1000.0);
        let c = series_capacitance(w, l);
        let p = load_power(Tuning::Series, w, 1.0, l, r, c, r);
        assert!((p - 250e-6).abs() < 1e-12, "{p}");
        // the capacitor sees Q·V with the load shorted
        let q = quality_factor(w, l, r);
        assert!((capacitor_voltage(Tuning::Series, w, 1.0, l, r, c) - q).abs() < 1e-9 * q);
    }

    /// Parallel tuning: at resonance the Thevenin impedance is real, R(1 + Q²), and a load
    /// equal to it takes the matched power (circuit theory, no source needed).
    #[test]
    fn parallel_resonance_is_real_and_matches() {
        let (w, l, r) = (TAU * 50.0, 20.0, 800.0);
        let c = parallel_capacitance(w, l, r);
        let (_, z) = thevenin(Tuning::Parallel, w, 1.0, l, r, c);
        let q = quality_factor(w, l, r);
        assert!(z.im.abs() < 1e-9 * z.re, "{z}");
        assert!((z.re - r * (1.0 + q * q)).abs() < 1e-6 * z.re);
        let p = load_power(Tuning::Parallel, w, 1.0, l, r, c, z.re);
        assert!((p - matched_power(1.0, r)).abs() < 1e-9 * p, "{p}");
    }

    #[test]
    fn charge_energy_and_time() {
        let (e, t) = charge_time(0.1, 3.3, 1e-3);
        assert!((e - 0.5445).abs() < 1e-12 && (t - 544.5).abs() < 1e-9);
    }
}
