//! Figures of a probe: the field at a set of points, and at f > 0 the ellipse the field
//! vector traces there.

use serde::Serialize;

use crate::fields::Fields;
use crate::probe;

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct ProbeFigures {
    /// Sample positions (m).
    pub points: Vec<[f64; 2]>,
    /// Flux density per point (T rms per component; static: signed), null outside the domain.
    pub b_t: Vec<Option<[f64; 2]>>,
    /// |B| per point (T rms).
    pub b_abs_t: Vec<Option<f64>>,
    /// At f > 0: the ellipse the field vector traces per point.
    pub ellipse: Option<Vec<Option<Ellipse>>>,
}

/// The ellipse traced by a rotating (or alternating: minor 0) field vector.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct Ellipse {
    /// Semi-axes, rms (peak / √2), T.
    pub major_t: f64,
    pub minor_t: f64,
    /// Direction of the major axis from +x (degrees, −90..90).
    pub angle_deg: f64,
}

/// Field ellipse of an rms phasor vector u + jv: semi-axes (rms, i.e. peak / √2) and the
/// direction of the major axis in degrees from +x.
pub fn field_ellipse(u: [f64; 2], v: [f64; 2]) -> Ellipse {
    // eigen-decomposition of G = u uᵀ + v vᵀ
    let (a, b, c) = (
        u[0] * u[0] + v[0] * v[0],
        u[0] * u[1] + v[0] * v[1],
        u[1] * u[1] + v[1] * v[1],
    );
    let m = 0.5 * (a + c);
    let r = (0.25 * (a - c) * (a - c) + b * b).sqrt();
    let angle = 0.5 * (2.0 * b).atan2(a - c);
    Ellipse {
        major_t: (m + r).max(0.0).sqrt(),
        minor_t: (m - r).max(0.0).sqrt(),
        angle_deg: angle.to_degrees(),
    }
}

/// The total field at `points`; `ac` keeps per-component rms magnitudes and the ellipses.
pub fn probe_figures(fields: &Fields, points: Vec<[f64; 2]>, ac: bool) -> ProbeFigures {
    let re = probe::sample(&fields.total.f[0], &points);
    let im = probe::sample(&fields.total.f[1], &points);
    let pairs: Vec<Option<([f64; 2], [f64; 2])>> = re
        .iter()
        .zip(&im)
        .map(|(a, b)| match (a.b, b.b) {
            (Some(x), Some(y)) => Some((x, y)),
            _ => None,
        })
        .collect();
    let b_t = pairs
        .iter()
        .map(|p| {
            p.map(|(x, y)| {
                if ac {
                    [x[0].hypot(y[0]), x[1].hypot(y[1])]
                } else {
                    x
                }
            })
        })
        .collect();
    let b_abs_t = pairs
        .iter()
        .map(|p| p.map(|(x, y)| (x[0].powi(2) + x[1].powi(2) + y[0].powi(2) + y[1].powi(2)).sqrt()))
        .collect();
    let ellipse = ac.then(|| {
        pairs
            .iter()
            .map(|p| p.map(|(x, y)| field_ellipse(x, y)))
            .collect()
    });
    ProbeFigures {
        points,
        b_t,
        b_abs_t,
        ellipse,
    }
}
