//! Symmetric quadrature rules on the reference triangle, in barycentric coordinates.
//!
//! Weights sum to 1 (multiply by the triangle's area). Rules from D. A. Dunavant, "High degree
//! efficient symmetrical Gaussian quadrature rules for the triangle", Int. J. Numer. Meth. Eng.
//! 21 (1985) 1129–1148 (degrees 2, 5 and 6 used here); tests check exactness on monomials.

/// One quadrature point: barycentric coordinates and weight (fraction of the area).
#[derive(Clone, Copy, Debug)]
pub struct QuadPoint {
    pub l: [f64; 3],
    pub w: f64,
}

const fn qp(l0: f64, l1: f64, l2: f64, w: f64) -> QuadPoint {
    QuadPoint { l: [l0, l1, l2], w }
}

/// Degree 2, 3 points (Dunavant rule 2).
pub const DEGREE2: [QuadPoint; 3] = [
    qp(2.0 / 3.0, 1.0 / 6.0, 1.0 / 6.0, 1.0 / 3.0),
    qp(1.0 / 6.0, 2.0 / 3.0, 1.0 / 6.0, 1.0 / 3.0),
    qp(1.0 / 6.0, 1.0 / 6.0, 2.0 / 3.0, 1.0 / 3.0),
];

const A5: f64 = 0.059_715_871_789_770;
const B5: f64 = 0.470_142_064_105_115;
const WAB5: f64 = 0.132_394_152_788_506;
const C5: f64 = 0.797_426_985_353_087;
const D5: f64 = 0.101_286_507_323_456;
const WCD5: f64 = 0.125_939_180_544_827;

/// Degree 5, 7 points (Dunavant rule 5).
pub const DEGREE5: [QuadPoint; 7] = [
    qp(1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0, 0.225),
    qp(A5, B5, B5, WAB5),
    qp(B5, A5, B5, WAB5),
    qp(B5, B5, A5, WAB5),
    qp(C5, D5, D5, WCD5),
    qp(D5, C5, D5, WCD5),
    qp(D5, D5, C5, WCD5),
];

const A6: f64 = 0.873_821_971_016_996;
const B6: f64 = 0.063_089_014_491_502;
const W6A: f64 = 0.050_844_906_370_207;
const C6: f64 = 0.501_426_509_658_179;
const D6: f64 = 0.249_286_745_170_910;
const W6C: f64 = 0.116_786_275_726_379;
const E6: f64 = 0.636_502_499_121_399;
const F6: f64 = 0.310_352_451_033_785;
const G6: f64 = 0.053_145_049_844_816;
const W6E: f64 = 0.082_851_075_618_374;

/// Degree 6, 12 points (Dunavant rule 6), used for error norms.
pub const DEGREE6: [QuadPoint; 12] = [
    qp(A6, B6, B6, W6A),
    qp(B6, A6, B6, W6A),
    qp(B6, B6, A6, W6A),
    qp(C6, D6, D6, W6C),
    qp(D6, C6, D6, W6C),
    qp(D6, D6, C6, W6C),
    qp(E6, F6, G6, W6E),
    qp(E6, G6, F6, W6E),
    qp(F6, E6, G6, W6E),
    qp(F6, G6, E6, W6E),
    qp(G6, E6, F6, W6E),
    qp(G6, F6, E6, W6E),
];

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact integral of x^a y^b over the reference triangle (0,0),(1,0),(0,1):
    /// a! b! / (a + b + 2)!  (standard result, no source needed).
    fn exact(a: u32, b: u32) -> f64 {
        let f = |n: u32| (1..=n).map(f64::from).product::<f64>();
        f(a) * f(b) / f(a + b + 2)
    }

    fn check(rule: &[QuadPoint], degree: u32) {
        let sum: f64 = rule.iter().map(|q| q.w).sum();
        assert!((sum - 1.0).abs() < 1e-12, "weights sum {sum}");
        for a in 0..=degree {
            for b in 0..=(degree - a) {
                // reference triangle area 1/2; x = l1, y = l2
                let q: f64 = rule
                    .iter()
                    .map(|p| 0.5 * p.w * p.l[1].powi(a as i32) * p.l[2].powi(b as i32))
                    .sum();
                let e = exact(a, b);
                assert!((q - e).abs() < 1e-13, "x^{a} y^{b}: {q} vs {e}");
            }
        }
    }

    #[test]
    fn rules_are_exact_to_their_degree() {
        check(&DEGREE2, 2);
        check(&DEGREE5, 5);
        check(&DEGREE6, 6);
    }
}
