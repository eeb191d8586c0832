//! Field samples along lines and on grids.

use fluxpick_solver::Field;

/// One sample: position and flux density (None outside the domain).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sample {
    pub x: [f64; 2],
    pub b: Option<[f64; 2]>,
    pub a: Option<f64>,
}

/// Points evenly spaced from `from` to `to` inclusive (n >= 2).
pub fn line_points(from: [f64; 2], to: [f64; 2], n: usize) -> Vec<[f64; 2]> {
    let n = n.max(2);
    (0..n)
        .map(|i| {
            let t = i as f64 / (n - 1) as f64;
            [
                from[0] + t * (to[0] - from[0]),
                from[1] + t * (to[1] - from[1]),
            ]
        })
        .collect()
}

/// A grid of nx × ny points over the rectangle (row by row, x fastest).
pub fn grid_points(min: [f64; 2], max: [f64; 2], n: [usize; 2]) -> Vec<[f64; 2]> {
    let xs = line_points([min[0], 0.0], [max[0], 0.0], n[0]);
    let ys = line_points([0.0, min[1]], [0.0, max[1]], n[1]);
    ys.iter()
        .flat_map(|y| xs.iter().map(move |x| [x[0], y[1]]))
        .collect()
}

pub fn sample(f: &Field, points: &[[f64; 2]]) -> Vec<Sample> {
    points
        .iter()
        .map(|&x| match f.at(x) {
            Some(v) => Sample {
                x,
                b: Some(v.b),
                a: Some(v.a),
            },
            None => Sample {
                x,
                b: None,
                a: None,
            },
        })
        .collect()
}
