"""(i) Method-2 building block check: filament M via Bessel integral mu0 pi a b \int J1(ka)J1(kb)exp(-kd)dk
    against the published Maxwell values; (ii) Wheeler multilayer formula vs the computed L."""
import numpy as np
from scipy.special import j1
from scipy.integrate import quad
MU0 = 4e-7*np.pi
def M_bessel(a, b, d):   # mm in, H out
    f = lambda k: j1(k*a)*j1(k*b)*np.exp(-k*d)
    edges = np.arange(0, 60/d, 0.5); s = 0.0
    for lo, hi in zip(edges[:-1], edges[1:]):
        s += quad(f, lo, hi, epsabs=1e-30, epsrel=1e-13, limit=200)[0]
    return MU0*np.pi*a*b*s*1e-3
for a, b, d, ref in [(10, 15, 5, 11.84650), (10, 10, 10, 4.940785)]:
    v = M_bessel(a, b, d)*1e9
    print(f"Bessel-route filament M(a={a},b={b},d={d} mm) = {v:.12f} nH  (published {ref}, rel diff {(v-ref)/ref:.1e})")
inch = 25.4
a, b, c, N = 20/inch, 20/inch, 10/inch, 500
Lw = 0.8*a*a*N*N/(6*a + 9*b + 10*c)*1e-6
L = 7.895244130740726e-3
print(f"Wheeler: {Lw*1e3:.6f} mH; computed {L*1e3:.9f} mH; Wheeler/computed - 1 = {Lw/L - 1:.4%}")
