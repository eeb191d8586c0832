"""Method 2 (independent of elliptic integrals): Hankel-transform / Bessel route.
Filament mutual inductance  M = mu0 pi a b \int_0^inf J1(ka) J1(kb) exp(-k|d|) dk.
Integrating analytically over a rectangular cross-section [R1,R2]x[z1,z1+l] for both coils:
   L = mu0 pi (N/A)^2 \int_0^inf P(k)^2 Z(k) dk
   P(k) = \int_{R1}^{R2} r J1(kr) dr = [F(kR2) - F(kR1)]/k^2,
   F(x) = \int_0^x t J1(t) dt = (pi x/2)[J1(x) H0(x) - J0(x) H1(x)]   (H = Struve functions)
   Z(k) = \int\int exp(-k|z1-z2|) dz1 dz2 = 2(kl - 1 + exp(-kl))/k^2
The k-integral is done with Gauss-Legendre panels up to Kmax plus the analytic tail of the
non-oscillating asymptote P^2 Z ~ 2 l (R1+R2)/(pi k^4)  ->  tail = 2 l (R1+R2)/(3 pi Kmax^3).
Lengths internally in mm."""
import numpy as np
from scipy.special import j0, j1, struve
from math import factorial
MU0 = 4e-7*np.pi

def F(x):
    return 0.5*np.pi*x*(j1(x)*struve(0, x) - j0(x)*struve(1, x))

def Z(k, l):
    x = k*l
    out = np.empty_like(x)
    sm = x < 0.5
    xs = x[sm]
    ser = np.zeros_like(xs)
    for n in range(2, 30):
        ser += (-xs)**n/factorial(n)
    out[sm] = 2*ser/k[sm]**2
    xb = x[~sm]
    out[~sm] = 2*(xb - 1 + np.exp(-xb))/k[~sm]**2
    return out

def J_integral(R1, R2, l, Kmax, panel, npts=20, tail=True):
    g, w = np.polynomial.legendre.leggauss(npts)
    edges = np.arange(0.0, Kmax + panel/2, panel)
    a = edges[:-1, None]; b = edges[1:, None]
    k = (0.5*(b - a)*g[None, :] + 0.5*(a + b)).ravel()
    wk = (0.5*(b - a)*w[None, :]).ravel()
    P = (F(k*R2) - F(k*R1))/k**2
    val = np.sum(wk*P*P*Z(k, l))
    if tail:
        val += 2*l*(R1 + R2)/(3*np.pi*edges[-1]**3)
    return val

def L_coil(N, R1, R2, l, **kw):
    """R1,R2,l in metres."""
    mm = 1e3
    A = (R2 - R1)*(l)*mm*mm
    Jv = J_integral(R1*mm, R2*mm, l*mm, **kw)
    return MU0*np.pi*(N/A)**2*Jv*1e-3

if __name__ == "__main__":
    N = 500
    for Kmax in [100.0, 300.0, 1000.0, 3000.0]:
        for panel, npts in [(0.1, 12), (0.1, 20), (0.05, 20)]:
            L = L_coil(N, 15e-3, 25e-3, 20e-3, Kmax=Kmax, panel=panel, npts=npts)
            Lnt = L_coil(N, 15e-3, 25e-3, 20e-3, Kmax=Kmax, panel=panel, npts=npts, tail=False)
            print(f"Kmax={Kmax:7.0f}/mm panel={panel} npts={npts}: L = {L*1e3:.15f} mH (without tail {Lnt*1e3:.15f})", flush=True)
