"""Method 1b: same Duffy-transformed elliptic-integral formulation as method 1, but with composite
Gauss-Legendre product quadrature on geometrically graded panels (grading toward both ends of [0,1],
where the x ln x and S^3 ln S endpoint singularities sit), refined in (levels, points per panel).
Provides a quadrature-rule-independent check of method 1."""
import numpy as np
import method1_duffy_tanhsinh as m1

def graded_gl(npts, levels, sigma=0.2):
    g, w = np.polynomial.legendre.leggauss(npts)
    # breakpoints: 0, sigma^levels*0.5, ..., sigma*0.5, 0.5, 1-sigma*0.5, ..., 1
    left = [0.0] + [0.5*sigma**j for j in range(levels, 0, -1)] + [0.5]
    xs, xcs, ws = [], [], []
    for lo, hi in zip(left[:-1], left[1:]):
        x = 0.5*(hi - lo)*g + 0.5*(hi + lo); ww = 0.5*(hi - lo)*w
        xs += [x, 1 - x]; xcs += [1 - x, x]; ws += [ww, ww]   # mirror to right half (xc accurate)
    return np.concatenate(xs), np.concatenate(xcs), np.concatenate(ws)

if __name__ == "__main__":
    N = 500
    for npts, levels in [(6, 8), (8, 12), (10, 16), (12, 20), (14, 24)]:
        m1.ts_nodes = lambda h, npts=npts, levels=levels: graded_gl(npts, levels)
        L = m1.L_coil(N, 15e-3, 25e-3, -10e-3, 10e-3, None)
        print(f"GL graded: {npts} pts/panel, {levels} levels/end: L = {L*1e3:.15f} mH", flush=True)
