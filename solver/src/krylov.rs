//! Restarted GMRES for complex systems with a real preconditioner.
//!
//! The eddy-current matrix A = K + jωM (K: curl-curl stiffness, SPD with the boundary
//! conditions; M: conductivity mass, positive semi-definite) is complex symmetric. With the
//! real SPD preconditioner P = K + ωM, P^{-1/2} A P^{-1/2} = (I − T) + jT with T symmetric and
//! 0 ≤ T ≤ I, a normal matrix whose eigenvalues lie on the segment from 1 to j: GMRES then
//! converges at a rate independent of the mesh and of ω (the real-valued preconditioner of
//! Axelsson & Kucherov, "Real valued iterative methods for solving complex symmetric linear
//! systems", Numer. Linear Algebra Appl. 7 (2000); the bound on the spectrum is elementary).
//! P is factorised once by the supernodal Cholesky, the same as the static solve.

use faer::c64;
use rayon::prelude::*;

/// Result of one solve.
#[derive(Clone, Debug)]
pub struct KrylovReport {
    pub iterations: usize,
    pub relative_residual: f64,
}

fn dot(a: &[c64], b: &[c64]) -> c64 {
    // Hermitian inner product <a, b> = Σ conj(a) b
    a.iter()
        .zip(b)
        .fold(c64::new(0.0, 0.0), |s, (x, y)| s + x.conj() * y)
}

fn norm(a: &[c64]) -> f64 {
    a.iter().map(|x| x.norm_sqr()).sum::<f64>().sqrt()
}

/// Solves A x = b by right-preconditioned GMRES(restart) from x = 0, to relative residual
/// `tol` or `max_iter` iterations. `apply` computes A v, `precond` computes P⁻¹ v.
pub fn gmres(
    b: &[c64],
    apply: impl Fn(&[c64]) -> Vec<c64> + Sync,
    precond: impl Fn(&[c64]) -> Vec<c64>,
    tol: f64,
    restart: usize,
    max_iter: usize,
) -> (Vec<c64>, KrylovReport) {
    let precond_all = |vs: &[&[c64]]| -> Vec<Vec<c64>> { vs.iter().map(|v| precond(v)).collect() };
    gmres_batch(&[b.to_vec()], apply, precond_all, tol, restart, max_iter)
        .pop()
        .expect("one system")
}

/// One system's state in [`gmres_batch`].
struct System {
    x: Vec<c64>,
    bnorm: f64,
    total: usize,
    rel: f64,
    /// True relative residual at the last restart.
    restart_rel: f64,
    /// The last cycle ended because its own residual estimate met the tolerance.
    estimate_met: bool,
    done: bool,
    /// Arnoldi basis V, preconditioned basis Z, Hessenberg columns (rotated), Givens
    /// rotations and the rotated right-hand side of the current cycle; empty between cycles.
    v: Vec<Vec<c64>>,
    z: Vec<Vec<c64>>,
    h: Vec<Vec<c64>>,
    cs: Vec<c64>,
    sn: Vec<c64>,
    g: Vec<c64>,
}

impl System {
    /// Ends the cycle: x += Z y with y from the triangular Hessenberg system.
    fn finish_cycle(&mut self) {
        let k = self.h.len();
        let zero = c64::new(0.0, 0.0);
        let mut y = vec![zero; k];
        for i in (0..k).rev() {
            let mut s = self.g[i];
            for j in i + 1..k {
                s -= self.h[j][i] * y[j];
            }
            y[i] = s / self.h[i][i];
        }
        for (j, yj) in y.iter().enumerate() {
            for (xi, zi) in self.x.iter_mut().zip(&self.z[j]) {
                *xi += yj * zi;
            }
        }
        self.v.clear();
        self.z.clear();
        self.h.clear();
        self.cs.clear();
        self.sn.clear();
    }
}

/// After a cycle whose residual estimate met the tolerance, the next restart must find the
/// true residual at most this fraction of the one before, or the solve stops there (the
/// true residual has reached the rounding floor of a large system; the caller's own
/// residual check then decides).
const STAGNATION: f64 = 0.5;

/// GMRES for several right-hand sides of the same matrix, run in lockstep so that each
/// iteration applies the preconditioner to all the systems' vectors at once (`precond`
/// receives them together: a direct solver sweeps its factor once for the whole block).
/// Each system has its own Krylov space, restarts and stopping test, exactly as [`gmres`]
/// would run it alone; the products with A and the orthogonalisations run in parallel.
pub fn gmres_batch(
    bs: &[Vec<c64>],
    apply: impl Fn(&[c64]) -> Vec<c64> + Sync,
    precond: impl Fn(&[&[c64]]) -> Vec<Vec<c64>>,
    tol: f64,
    restart: usize,
    max_iter: usize,
) -> Vec<(Vec<c64>, KrylovReport)> {
    let zero = c64::new(0.0, 0.0);
    let mut sys: Vec<System> = bs
        .iter()
        .map(|b| {
            let bnorm = norm(b);
            System {
                x: vec![zero; b.len()],
                bnorm,
                total: 0,
                rel: if bnorm == 0.0 { 0.0 } else { 1.0 },
                restart_rel: 1.0,
                estimate_met: false,
                done: bnorm == 0.0,
                v: Vec::new(),
                z: Vec::new(),
                h: Vec::new(),
                cs: Vec::new(),
                sn: Vec::new(),
                g: Vec::new(),
            }
        })
        .collect();
    loop {
        // Systems between cycles: true residual, stop or start a new cycle.
        sys.par_iter_mut()
            .zip(bs.par_iter())
            .filter(|(s, _)| !s.done && s.v.is_empty())
            .for_each(|(s, b)| {
                let ax = apply(&s.x);
                let r: Vec<c64> = b.iter().zip(&ax).map(|(b, a)| b - a).collect();
                let beta = norm(&r);
                s.rel = beta / s.bnorm;
                // rounding floor: the estimate met the tolerance but the true residual did
                // not even halve since the last restart; more cycles cannot help
                let stalled = s.estimate_met && s.rel > STAGNATION * s.restart_rel;
                s.restart_rel = s.rel;
                if s.rel <= tol || s.total >= max_iter || stalled {
                    s.done = true;
                    return;
                }
                s.v.push(r.iter().map(|x| x / beta).collect());
                s.g = vec![zero; restart + 1];
                s.g[0] = c64::new(beta, 0.0);
            });
        let active: Vec<usize> = (0..sys.len()).filter(|&i| !sys[i].done).collect();
        if active.is_empty() {
            break;
        }
        let zs = {
            let vs: Vec<&[c64]> = active
                .iter()
                .map(|&i| sys[i].v.last().expect("cycle started").as_slice())
                .collect();
            precond(&vs)
        };
        let mut slots: Vec<Option<Vec<c64>>> = vec![None; sys.len()];
        for (&i, z) in active.iter().zip(zs) {
            slots[i] = Some(z);
        }
        sys.par_iter_mut()
            .zip(slots.into_par_iter())
            .for_each(|(s, zk)| {
                let Some(zk) = zk else { return };
                let k = s.h.len();
                let mut w = apply(&zk);
                s.z.push(zk);
                let mut col = vec![zero; k + 2];
                // modified Gram–Schmidt
                for (i, vi) in s.v.iter().enumerate() {
                    let hik = dot(vi, &w);
                    col[i] = hik;
                    for (wj, vj) in w.iter_mut().zip(vi) {
                        *wj -= hik * vj;
                    }
                }
                let hn = norm(&w);
                col[k + 1] = c64::new(hn, 0.0);
                // apply the earlier rotations, then a new one
                for i in 0..k {
                    let t = s.cs[i].conj() * col[i] + s.sn[i].conj() * col[i + 1];
                    col[i + 1] = -s.sn[i] * col[i] + s.cs[i] * col[i + 1];
                    col[i] = t;
                }
                let (a, bb) = (col[k], col[k + 1]);
                let d = (a.norm_sqr() + bb.norm_sqr()).sqrt();
                let (c, sn) = if d == 0.0 {
                    (c64::new(1.0, 0.0), zero)
                } else {
                    (a / d, bb / d)
                };
                col[k] = c.conj() * a + sn.conj() * bb;
                col[k + 1] = zero;
                s.cs.push(c);
                s.sn.push(sn);
                let gk = s.g[k];
                s.g[k] = c.conj() * gk;
                s.g[k + 1] = -sn * gk;
                s.h.push(col);
                s.total += 1;
                s.rel = s.g[k + 1].norm() / s.bnorm;
                s.estimate_met = s.rel <= tol;
                if s.rel <= tol || hn == 0.0 || s.total >= max_iter || k + 1 == restart {
                    s.finish_cycle();
                } else {
                    s.v.push(w.iter().map(|x| x / hn).collect());
                }
            });
    }
    sys.into_iter()
        .map(|s| {
            (
                s.x,
                KrylovReport {
                    iterations: s.total,
                    relative_residual: s.rel,
                },
            )
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small complex symmetric tridiagonal system (K: 1D Laplacian, M: identity on half
    /// the unknowns) solved with and without the preconditioner agrees with a dense
    /// Gaussian elimination.
    #[test]
    fn gmres_solves_a_complex_symmetric_system() {
        let n = 40;
        let omega = 3.0;
        let m = |i: usize| if i >= n / 2 { 1.0 } else { 0.0 };
        let apply = |x: &[c64]| -> Vec<c64> {
            (0..n)
                .map(|i| {
                    let mut y = x[i] * c64::new(2.0, omega * m(i));
                    if i > 0 {
                        y -= x[i - 1];
                    }
                    if i + 1 < n {
                        y -= x[i + 1];
                    }
                    y
                })
                .collect()
        };
        let b: Vec<c64> = (0..n).map(|i| c64::new(1.0 + i as f64, -0.5)).collect();
        // dense elimination of the same matrix
        let mut a = vec![vec![c64::new(0.0, 0.0); n + 1]; n];
        for i in 0..n {
            a[i][i] = c64::new(2.0, omega * m(i));
            if i > 0 {
                a[i][i - 1] = c64::new(-1.0, 0.0);
            }
            if i + 1 < n {
                a[i][i + 1] = c64::new(-1.0, 0.0);
            }
            a[i][n] = b[i];
        }
        for k in 0..n {
            for i in k + 1..n {
                let f = a[i][k] / a[k][k];
                for j in k..=n {
                    let t = a[k][j];
                    a[i][j] -= f * t;
                }
            }
        }
        let mut exact = vec![c64::new(0.0, 0.0); n];
        for i in (0..n).rev() {
            let mut s = a[i][n];
            for j in i + 1..n {
                s -= a[i][j] * exact[j];
            }
            exact[i] = s / a[i][i];
        }
        let (x, rep) = gmres(&b, apply, |v| v.to_vec(), 1e-12, 15, 2000);
        assert!(rep.relative_residual < 1e-12, "{rep:?}");
        let err: f64 = x
            .iter()
            .zip(&exact)
            .map(|(a, b)| (a - b).norm())
            .fold(0.0, f64::max);
        assert!(err < 1e-9 * norm(&exact), "error {err}");
    }

    /// The batch runs each system exactly as the single solver would: same iterations, same
    /// answer, and a zero right-hand side gives zero at once.
    #[test]
    fn batch_matches_single_solves() {
        let n = 60;
        let apply = |x: &[c64]| -> Vec<c64> {
            (0..n)
                .map(|i| {
                    let mut y = x[i] * c64::new(2.0 + 0.01 * i as f64, 0.7 * (i % 3) as f64);
                    if i > 0 {
                        y -= x[i - 1];
                    }
                    if i + 1 < n {
                        y -= x[i + 1];
                    }
                    y
                })
                .collect()
        };
        // a crude preconditioner: the inverse diagonal (real part)
        let pre = |v: &[c64]| -> Vec<c64> {
            v.iter()
                .enumerate()
                .map(|(i, z)| z / (2.0 + 0.01 * i as f64))
                .collect()
        };
        let bs: Vec<Vec<c64>> = vec![
            (0..n).map(|i| c64::new(1.0, i as f64 * 0.1)).collect(),
            vec![c64::new(0.0, 0.0); n],
            (0..n).map(|i| c64::new((i as f64).sin(), 0.0)).collect(),
        ];
        let batch = gmres_batch(
            &bs,
            apply,
            |vs: &[&[c64]]| vs.iter().map(|v| pre(v)).collect(),
            1e-11,
            10,
            500,
        );
        for (b, (xb, rb)) in bs.iter().zip(&batch) {
            let (xs, rs) = gmres(b, apply, pre, 1e-11, 10, 500);
            assert_eq!(rb.iterations, rs.iterations);
            assert!(rb.relative_residual <= 1e-11, "{rb:?}");
            let d = xb
                .iter()
                .zip(&xs)
                .map(|(a, b)| (a - b).norm())
                .fold(0.0, f64::max);
            assert!(d <= 1e-12 * norm(&xs).max(1.0), "difference {d}");
        }
        assert_eq!(batch[1].1.iterations, 0);
        assert!(batch[1].0.iter().all(|z| z.norm() == 0.0));
    }
}
