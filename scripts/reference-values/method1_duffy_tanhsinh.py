"""Method 1: direct quadrature of L = (N/A)^2 \int_A\int_A M dA1 dA2 with Maxwell's elliptic-integral M.
Reduction: z1,z2 -> u = z2 - z1 (weight (l-|u|)), symmetry u -> -u and r1 <-> r2:
   I = 4 \int_{R1}^{R2} dr1 \int_0^{R2-r1} ds \int_0^l du (l-u) M(r1, r1+s, u)
The log singularity sits at the corner (s,u)=(0,0). The (s,u) rectangle is split along the diagonal
into 2 triangles, each Duffy-transformed (s = S x, u = l x y  /  u = l x, s = S x y; Jacobian S l x),
so the singularity becomes x*ln(x) at x=0. All three 1D integrals use tanh-sinh (double-exponential)
quadrature, which converges exponentially for endpoint singularities of this type.
Convergence is shown by halving the step h."""
import sys, numpy as np
from common import M_fil_s, MU0

def ts_nodes(h, tmax=4.0):
    """tanh-sinh on [0,1]: returns x, 1-x (accurate), weights."""
    t = np.arange(-tmax, tmax + h/2, h)
    s = np.pi*np.sinh(t)
    x = 1.0/(1.0 + np.exp(-s))
    xc = 1.0/(1.0 + np.exp(s))
    w = h*np.pi*np.cosh(t)*x*xc   # dx/dt = pi cosh(t) x (1-x)
    keep = (x > 1e-40) & (xc > 1e-40) & (w > 1e-300)
    return x[keep], xc[keep], w[keep]

def I_rect(R1, R2, l, h):
    x, xc, wx = ts_nodes(h)
    # r1 = R1 + (R2-R1) x ; S = R2 - r1 = (R2-R1)*(1-x)
    W = R2 - R1
    r1 = R1 + W*x; S = W*xc; wr = W*wx
    X = x[:, None]; Y = x[None, :]; WXY = wx[:, None]*wx[None, :]
    total = 0.0
    for i in range(len(r1)):
        a = r1[i]; Si = S[i]
        # triangle 1: s = S X, u = l X Y
        s1 = Si*X; u1 = l*X*Y
        f1 = (l - u1)*M_fil_s(a, s1, u1)
        # triangle 2: u = l X, s = S X Y
        u2 = l*X; s2 = Si*X*Y
        f2 = (l - u2)*M_fil_s(a, s2, u2)
        J = Si*l*X
        total += wr[i]*np.sum(WXY*J*(f1 + f2))
    return 4.0*total

def L_coil(N, R1, R2, z1, z2, h):
    A = (R2 - R1)*(z2 - z1)
    return (N/A)**2*I_rect(R1, R2, z2 - z1, h)

if __name__ == "__main__":
    N = 500; R1, R2, Z1, Z2 = 15e-3, 25e-3, -10e-3, 10e-3
    prev = None
    for h in [1/2, 1/4, 1/8, 1/16, 1/32, 1/64]:
        L = L_coil(N, R1, R2, Z1, Z2, h)
        d = "" if prev is None else f"  change {abs(L-prev)/L:.2e}"
        print(f"h={h:<8} L = {L*1e3:.15f} mH{d}", flush=True)
        prev = L
