"""Validation: thin single-layer solenoid a=10 mm, N=100, l=50 mm; published current-sheet L = 67.1017 uH.
(i) current sheet directly: L = (N/l)^2 * 2 \int_0^l (l-u) M(a,a,u) du   (tanh-sinh, log singularity at u=0)
(ii) thin rectangular shells [a-t/2, a+t/2] x [0,l] with method 1 (elliptic) and method 2 (Bessel);
     expected L_shell ~ L_sheet (1 - t/(3a)) for small t."""
import numpy as np
from common import M_fil_s
from method1_duffy_tanhsinh import ts_nodes, L_coil as L1
from method2_bessel import L_coil as L2, MU0
from scipy.special import j1
a, N, l = 10e-3, 100, 50e-3

def L_sheet(h):
    x, xc, w = ts_nodes(h)
    u = l*x
    return (N/l)**2*2*np.sum(w*l*(l - u)*M_fil_s(a, 0.0*u, u))

for h in [1/4, 1/8, 1/16, 1/32]:
    print(f"sheet, elliptic/tanh-sinh h={h}: L = {L_sheet(h)*1e6:.12f} uH")
Ls = L_sheet(1/32)
print(f"published 67.1017 uH, rel diff {(Ls-67.1017e-6)/67.1017e-6:.2e}")
# Nagaoka coefficient for reference
print(f"Nagaoka coefficient K_N = L/(mu0 pi a^2 N^2/l) = {Ls/(MU0*np.pi*a*a*N*N/l):.12f}")
print()
print(" t[mm]   L_shell method1 [uH]     L_shell method2 [uH]     (L_sheet-L_shell)/L_sheet / (t/3a)")
for t in [2e-3, 1e-3, 0.5e-3, 0.25e-3, 0.1e-3]:
    v1 = L1(N, a - t/2, a + t/2, 0.0, l, 1/16)
    v2 = L2(N, a - t/2, a + t/2, l, Kmax=3000.0, panel=0.05, npts=20)
    print(f"{t*1e3:5.2f}  {v1*1e6:.12f}  {v2*1e6:.12f}   {((Ls - v1)/Ls)/(t/(3*a)):.6f}")
