//! B-H curves: monotone interpolation of H(B) and the reluctivity ν(|B|²) = H/B with its
//! derivative, for the Newton solve.
//!
//! H(B) is interpolated by piecewise cubic Hermite polynomials with Fritsch–Carlson slopes
//! (F. N. Fritsch and R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer.
//! Anal. 17, 1980), which keeps H increasing in B, so dH/dB > 0 and the Newton Jacobian stays
//! positive definite. Beyond the last point the curve is extended along μ0:
//! H = H_n + (B − B_n)/μ0 (the material is taken as fully saturated there).

use crate::MU0;

#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BhError {
    #[error("a B-H curve needs at least 3 points (got {0})")]
    TooFewPoints(usize),
    #[error("a B-H curve must start at the origin (H = 0, B = 0)")]
    NotFromOrigin,
    #[error("point {0} of the B-H curve: H and B must both increase strictly")]
    NotIncreasing(usize),
}

/// A monotone B-H curve.
#[derive(Clone, Debug, PartialEq)]
pub struct BhCurve {
    b: Vec<f64>,
    h: Vec<f64>,
    /// dH/dB at each point.
    m: Vec<f64>,
}

impl BhCurve {
    /// From `[H (A/m), B (T)]` points starting at the origin.
    pub fn new(points: &[[f64; 2]]) -> Result<Self, BhError> {
        if points.len() < 3 {
            return Err(BhError::TooFewPoints(points.len()));
        }
        if points[0] != [0.0, 0.0] {
            return Err(BhError::NotFromOrigin);
        }
        for k in 1..points.len() {
            let ok = points[k][0] > points[k - 1][0] && points[k][1] > points[k - 1][1];
            if !ok || !points[k][0].is_finite() || !points[k][1].is_finite() {
                return Err(BhError::NotIncreasing(k));
            }
        }
        let h: Vec<f64> = points.iter().map(|p| p[0]).collect();
        let b: Vec<f64> = points.iter().map(|p| p[1]).collect();
        let n = b.len();
        let delta: Vec<f64> = (0..n - 1)
            .map(|k| (h[k + 1] - h[k]) / (b[k + 1] - b[k]))
            .collect();
        let mut m = vec![0.0; n];
        m[0] = delta[0];
        m[n - 1] = delta[n - 2];
        for k in 1..n - 1 {
            m[k] = 0.5 * (delta[k - 1] + delta[k]);
        }
        for k in 0..n - 1 {
            let (a, bb) = (m[k] / delta[k], m[k + 1] / delta[k]);
            let s = a * a + bb * bb;
            if s > 9.0 {
                let t = 3.0 / s.sqrt();
                m[k] = t * a * delta[k];
                m[k + 1] = t * bb * delta[k];
            }
        }
        Ok(BhCurve { b, h, m })
    }

    /// H and dH/dB at flux density `b` ≥ 0.
    pub fn h_of_b(&self, b: f64) -> (f64, f64) {
        let n = self.b.len();
        if b >= self.b[n - 1] {
            return (self.h[n - 1] + (b - self.b[n - 1]) / MU0, 1.0 / MU0);
        }
        let k = match self.b.binary_search_by(|x| x.total_cmp(&b)) {
            Ok(k) => k.min(n - 2),
            Err(k) => k.saturating_sub(1).min(n - 2),
        };
        let d = self.b[k + 1] - self.b[k];
        let t = (b - self.b[k]) / d;
        let (t2, t3) = (t * t, t * t * t);
        let h = (2.0 * t3 - 3.0 * t2 + 1.0) * self.h[k]
            + (t3 - 2.0 * t2 + t) * d * self.m[k]
            + (-2.0 * t3 + 3.0 * t2) * self.h[k + 1]
            + (t3 - t2) * d * self.m[k + 1];
        let dh = ((6.0 * t2 - 6.0 * t) * self.h[k]
            + (3.0 * t2 - 4.0 * t + 1.0) * d * self.m[k]
            + (-6.0 * t2 + 6.0 * t) * self.h[k + 1]
            + (3.0 * t2 - 2.0 * t) * d * self.m[k + 1])
            / d;
        (h, dh)
    }

    /// B at field strength `h` ≥ 0 (the inverse of [`Self::h_of_b`], by bisection).
    pub fn b_of_h(&self, h: f64) -> f64 {
        let n = self.b.len();
        if h >= self.h[n - 1] {
            return self.b[n - 1] + MU0 * (h - self.h[n - 1]);
        }
        let (mut lo, mut hi) = (0.0, self.b[n - 1]);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if self.h_of_b(mid).0 < h {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }

    /// Energy density ∫₀^b H dB (J/m³) at flux density `b` ≥ 0 (Simpson's rule on the
    /// interpolated curve; exact along the μ0 extension).
    pub fn energy_density(&self, b: f64) -> f64 {
        let n = self.b.len();
        let top = self.b[n - 1];
        let simpson = |a: f64, c: f64| -> f64 {
            let m = 64;
            let h = (c - a) / m as f64;
            let mut s = self.h_of_b(a).0 + self.h_of_b(c).0;
            for k in 1..m {
                let w = if k % 2 == 1 { 4.0 } else { 2.0 };
                s += w * self.h_of_b(a + k as f64 * h).0;
            }
            s * h / 3.0
        };
        if b <= top {
            return simpson(0.0, b);
        }
        let d = b - top;
        simpson(0.0, top) + self.h[n - 1] * d + 0.5 * d * d / MU0
    }

    /// Effective reluctivity for a sinusoidal flux density of peak `b_peak`: the ratio that
    /// gives the same cycle-average of H·B as the curve, 2⟨H(B̂ sin θ) B̂ sin θ⟩ / B̂²
    /// (an energy-equivalent linearisation, common practice for time-harmonic solves of
    /// saturating iron; an approximation, as the real field is not sinusoidal).
    pub fn effective_nu(&self, b_peak: f64) -> f64 {
        if b_peak < 1e-6 * self.b[1] {
            return self.m[0];
        }
        let n = 64;
        let mut s = 0.0;
        for k in 0..n {
            let t = std::f64::consts::FRAC_PI_2 * (k as f64 + 0.5) / n as f64;
            let b = b_peak * t.sin();
            s += self.h_of_b(b).0 * b;
        }
        2.0 * (s / n as f64) / (b_peak * b_peak)
    }

    /// Initial relative permeability (B/H at the origin), 1/(μ0 dH/dB).
    pub fn initial_mu_r(&self) -> f64 {
        1.0 / (MU0 * self.m[0])
    }

    /// ν(s) = H(B)/B with s = B², and dν/ds.
    pub fn nu(&self, s: f64) -> (f64, f64) {
        let b = s.max(0.0).sqrt();
        let small = 1e-6 * self.b[1];
        if b < small {
            return (self.m[0], 0.0);
        }
        let (h, dh) = self.h_of_b(b);
        let nu = h / b;
        let dnu_db = (dh * b - h) / (b * b);
        (nu, dnu_db / (2.0 * b))
    }
}

/// Typical curves, built in. The values are typical of their class and come from memory of
/// handbook and catalogue curves (no one grade or source); use a measured curve for design.
pub mod typical {
    /// Low-carbon (mild) structural steel.
    pub const MILD_STEEL: [[f64; 2]; 10] = [
        [0.0, 0.0],
        [100.0, 0.35],
        [200.0, 0.75],
        [400.0, 1.1],
        [800.0, 1.35],
        [1600.0, 1.52],
        [4000.0, 1.68],
        [10_000.0, 1.82],
        [40_000.0, 2.02],
        [100_000.0, 2.12],
    ];
    /// Non-oriented electrical steel (motor and transformer laminations).
    pub const ELECTRICAL_STEEL: [[f64; 2]; 10] = [
        [0.0, 0.0],
        [50.0, 0.5],
        [100.0, 1.0],
        [200.0, 1.25],
        [500.0, 1.42],
        [1000.0, 1.5],
        [2500.0, 1.6],
        [5000.0, 1.7],
        [10_000.0, 1.8],
        [50_000.0, 2.05],
    ];
    /// MnZn power ferrite at room temperature.
    pub const MNZN_FERRITE: [[f64; 2]; 8] = [
        [0.0, 0.0],
        [10.0, 0.025],
        [20.0, 0.06],
        [40.0, 0.16],
        [80.0, 0.3],
        [200.0, 0.4],
        [1000.0, 0.47],
        [5000.0, 0.5],
    ];
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolation_passes_through_the_points_and_stays_monotone() {
        for pts in [
            &typical::MILD_STEEL[..],
            &typical::ELECTRICAL_STEEL[..],
            &typical::MNZN_FERRITE[..],
        ] {
            let c = BhCurve::new(pts).unwrap();
            for p in pts {
                assert!((c.h_of_b(p[1]).0 - p[0]).abs() <= 1e-9 * p[0].max(1.0));
            }
            let top = pts.last().unwrap()[1] * 1.2;
            let mut last = -1.0;
            for k in 0..=2000 {
                let b = top * k as f64 / 2000.0;
                let (h, dh) = c.h_of_b(b);
                assert!(h > last - 1e-12 && dh > 0.0, "b {b}: h {h} dh {dh}");
                last = h;
                // ν and its derivative are consistent (central difference in s = b²)
                if b > 0.01 {
                    let s = b * b;
                    let e = 1e-6 * s;
                    let (nu, dnu) = c.nu(s);
                    let fd = (c.nu(s + e).0 - c.nu(s - e).0) / (2.0 * e);
                    assert!((dnu - fd).abs() <= 1e-4 * (dnu.abs() + nu / s), "b {b}");
                }
                // b_of_h inverts h_of_b
                assert!((c.b_of_h(h) - b).abs() < 1e-9 * top);
            }
            // the effective ν tends to the initial slope at low field
            let low = c.effective_nu(1e-4 * pts[1][1]);
            assert!((low / c.nu(0.0).0 - 1.0).abs() < 1e-3, "effective ν {low}");
            // the energy density of a straight-line start is ½ H B
            let e = c.energy_density(0.5 * pts[1][1]);
            let lin = 0.5 * c.h_of_b(0.5 * pts[1][1]).0 * 0.5 * pts[1][1];
            assert!((e / lin - 1.0).abs() < 0.2, "energy {e} vs {lin}");
            // and its derivative is H
            let b0 = 0.7 * pts.last().unwrap()[1];
            let de =
                (c.energy_density(b0 * 1.0001) - c.energy_density(b0 * 0.9999)) / (0.0002 * b0);
            assert!((de / c.h_of_b(b0).0 - 1.0).abs() < 1e-3, "dW/dB {de}");
            // beyond the last point the slope is μ0
            let (_, dh) = c.h_of_b(top);
            assert!((dh * MU0 - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn bad_curves_are_refused() {
        assert_eq!(
            BhCurve::new(&[[0.0, 0.0], [1.0, 1.0]]),
            Err(BhError::TooFewPoints(2))
        );
        assert_eq!(
            BhCurve::new(&[[1.0, 0.0], [2.0, 1.0], [3.0, 1.5]]),
            Err(BhError::NotFromOrigin)
        );
        assert_eq!(
            BhCurve::new(&[[0.0, 0.0], [2.0, 1.0], [3.0, 0.9]]),
            Err(BhError::NotIncreasing(2))
        );
    }
}
