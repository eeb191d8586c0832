"""Mutual inductance of two coaxial loops of round cross-section (radius rho0 = 0.1 mm, uniform current density),
centred at (r,z) = (10 mm, 0) and (15 mm, 5 mm):  M_avg = (1/(pi rho0^2))^2 \int_D1 \int_D2 M dA1 dA2.
Method A: Maxwell/elliptic M, product rule over both disks in polar coordinates (Gauss-Legendre in rho, trapezoid in phi).
Method B: Maxwell/elliptic M in mpmath (40 digits) + disk mean-value series
          avg_D f = sum_n rho0^(2n)/(4^n n!(n+1)!) Lap^n f, applied for both disks (terms up to total order 2 in rho0^2).
Method C: Bessel route (no elliptic integrals): since z2 > z1 everywhere, exp(-k(z2-z1)) separates:
          M_avg = mu0 pi \int_0^inf G1(k) G2(k) dk,  G_i(k) = avg_Di r J1(kr) exp(-+kz) ."""
import numpy as np, mpmath as mp
from scipy.special import j1
from common import M_fil, M_fil_mp, MU0
a0, z10, b0, z20, rho0 = 10e-3, 0.0, 15e-3, 5e-3, 0.1e-3

def disk_rule(nr, nphi):
    g, w = np.polynomial.legendre.leggauss(nr)
    rr = 0.5*rho0*(g + 1); wr = 0.5*rho0*w*rr          # includes Jacobian rho
    ph = 2*np.pi*np.arange(nphi)/nphi; wp = np.full(nphi, 2*np.pi/nphi)
    R, P = np.meshgrid(rr, ph, indexing='ij'); W = np.outer(wr, wp)/(np.pi*rho0**2)
    return (R*np.cos(P)).ravel(), (R*np.sin(P)).ravel(), W.ravel()

def method_A(nr, nphi):
    dx, dz, w = disk_rule(nr, nphi)
    a = a0 + dx[:, None]; z1 = z10 + dz[:, None]
    b = b0 + dx[None, :]; z2 = z20 + dz[None, :]
    return np.sum(w[:, None]*w[None, :]*M_fil(a, b, z2 - z1))

def method_B(dps=40, order=2):
    mp.mp.dps = dps
    rho = mp.mpf(rho0)
    f = lambda a, b, d: M_fil_mp(a, b, d)
    A, B, D = mp.mpf(a0), mp.mpf(b0), mp.mpf(z20 - z10)
    c = lambda n: rho**(2*n)/(4**n*mp.factorial(n)*mp.factorial(n + 1))
    # Lap1 = d2/da2 + d2/dd2 ; Lap2 = d2/db2 + d2/dd2 (z-derivatives act on d = z2 - z1)
    def der(i, j, k):   # d^i/da^i d^j/db^j d^k/dd^k
        return mp.diff(f, (A, B, D), (i, j, k))
    terms = {}
    terms[(0, 0)] = f(A, B, D)
    L1 = der(2, 0, 0) + der(0, 0, 2); L2 = der(0, 2, 0) + der(0, 0, 2)
    terms[(1, 0)] = L1; terms[(0, 1)] = L2
    if order >= 2:
        terms[(2, 0)] = der(4, 0, 0) + 2*der(2, 0, 2) + der(0, 0, 4)
        terms[(0, 2)] = der(0, 4, 0) + 2*der(0, 2, 2) + der(0, 0, 4)
        terms[(1, 1)] = der(2, 2, 0) + der(2, 0, 2) + der(0, 2, 2) + der(0, 0, 4)
    tot = mp.mpf(0)
    for (m, n), v in terms.items():
        tot += c(m)*c(n)*v
    # check Grad-Shafranov identity Lap1 M = (1/a) dM/da
    gs = (L1 - der(1, 0, 0)/A)/L1
    return tot, terms, gs

def method_C(nr, nphi, Kmax_per_mm=12.0, panel=0.25, npts=20):
    dx, dz, w = disk_rule(nr, nphi)
    g, gw = np.polynomial.legendre.leggauss(npts)
    Kmax = Kmax_per_mm*1e3; pan = panel*1e3
    edges = np.arange(0.0, Kmax + pan/2, pan)
    lo = edges[:-1, None]; hi = edges[1:, None]
    k = (0.5*(hi - lo)*g + 0.5*(hi + lo)).ravel(); wk = (0.5*(hi - lo)*gw).ravel()
    G1 = np.zeros_like(k); G2 = np.zeros_like(k)
    for i in range(len(w)):
        r1 = a0 + dx[i]; zz1 = z10 + dz[i]
        r2 = b0 + dx[i]; zz2 = z20 + dz[i]
        G1 += w[i]*r1*j1(k*r1)*np.exp(k*zz1 - k*0.5*(z20 + z10))
        G2 += w[i]*r2*j1(k*r2)*np.exp(-k*zz2 + k*0.5*(z20 + z10))
    return MU0*np.pi*np.sum(wk*G1*G2)

if __name__ == "__main__":
    Mfil = M_fil(a0, b0, z20 - z10)
    print(f"filament M (double)  = {Mfil*1e9:.15f} nH")
    for nr, nphi in [(2, 4), (3, 6), (4, 8), (6, 12), (8, 16)]:
        v = method_A(nr, nphi)
        print(f"A: nr={nr} nphi={nphi}: M_avg = {v*1e9:.15f} nH", flush=True)
    MA = method_A(8, 16)
    tot, terms, gs = method_B()
    print(f"B: series (mpmath 40 digits): M_avg = {mp.nstr(tot*1e9, 20)} nH")
    for key, v in terms.items():
        print(f"   term {key}: coefficient*value = {mp.nstr(v*(mp.mpf(rho0)**(2*sum(key)))/(4**sum(key)*mp.factorial(key[0])*mp.factorial(key[0]+1)*mp.factorial(key[1])*mp.factorial(key[1]+1))*1e9, 10)} nH")
    print(f"   Grad-Shafranov check (Lap1 M - M_a/a)/Lap1 M = {mp.nstr(gs, 5)}")
    tot1, _, _ = method_B(order=1)
    print(f"   first-order-only series: {mp.nstr(tot1*1e9, 20)} nH")
    for nr, nphi, K in [(4, 8, 8.0), (6, 12, 12.0), (8, 16, 12.0)]:
        v = method_C(nr, nphi, Kmax_per_mm=K)
        print(f"C: Bessel route nr={nr} nphi={nphi} Kmax={K}/mm: M_avg = {v*1e9:.15f} nH", flush=True)
    MC = method_C(8, 16)
    print(f"A vs B rel diff: {float((MA - tot)/tot):.2e};  A vs C rel diff: {(MA - MC)/MA:.2e}")
    print(f"M_avg - M_fil = {(MA - Mfil)*1e9:.6e} nH, relative {(MA - Mfil)/Mfil:.6e}")
    print(f"vs published 11.84650 nH: M_avg/11.84650nH - 1 = {MA/11.84650e-9 - 1:.3e}")
