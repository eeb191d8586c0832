"""Common routines: Maxwell mutual inductance of coaxial filaments.
Units: SI (metres, henries). mu0 = 4*pi*1e-7 exactly."""
import numpy as np
from scipy.special import ellipkm1, ellipe
import mpmath as mp

MU0 = 4e-7 * np.pi

def M_fil(a, b, d):
    """Maxwell M of coaxial circular filaments radii a,b, axial separation d (numpy, vectorised).
    M = mu0 sqrt(ab) [(2/k - k) K(k) - (2/k) E(k)],  k^2 = 4ab/((a+b)^2+d^2).
    scipy uses parameter m = k^2; K is evaluated via ellipkm1(p), p = 1-m = k'^2,
    with k'^2 computed directly (no cancellation) as ((a-b)^2+d^2)/((a+b)^2+d^2)."""
    a = np.asarray(a, float); b = np.asarray(b, float); d = np.asarray(d, float)
    den = (a + b)**2 + d**2
    p = ((a - b)**2 + d**2)/den
    m = np.where(p < 0.5, 1.0 - p, 4*a*b/den)
    k = np.sqrt(m)
    K = ellipkm1(p)
    E = ellipe(m)
    return MU0*np.sqrt(a*b)*((2/k - k)*K - (2/k)*E)

def M_fil_mp(a, b, d):
    """Same in mpmath (arbitrary precision). mpmath ellipk/ellipe also take parameter m=k^2."""
    a = mp.mpf(a); b = mp.mpf(b); d = mp.mpf(d)
    m = 4*a*b/((a+b)**2 + d**2)
    k = mp.sqrt(m)
    mu0 = 4*mp.pi*mp.mpf(10)**-7
    return mu0*mp.sqrt(a*b)*((2/k - k)*mp.ellipk(m) - (2/k)*mp.ellipe(m))

def M_fil_s(a, s, d):
    """Maxwell M with b = a + s given through the radial difference s (keeps k'^2 exact for tiny s,d)."""
    a = np.asarray(a, float); s = np.asarray(s, float); d = np.asarray(d, float)
    b = a + s
    den = (a + b)**2 + d**2
    p = (s*s + d*d)/den
    m = np.where(p < 0.5, 1.0 - p, 4*a*b/den)   # m = 1 - p exactly consistent, never > 1
    k = np.sqrt(m)
    return MU0*np.sqrt(a*b)*((2/k - k)*ellipkm1(p) - (2/k)*ellipe(m))
