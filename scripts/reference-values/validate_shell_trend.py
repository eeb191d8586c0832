"""Check that the thin-shell deficit coefficient (L_sheet-L_shell)/L_sheet/(t/3a) -> 1 for long solenoids
(the t/(3a) rule is the long-solenoid limit), using method 1 (elliptic, tanh-sinh) for sheet and shell."""
import numpy as np
from common import M_fil_s
from method1_duffy_tanhsinh import ts_nodes, L_coil as L1
a, N = 10e-3, 100
def L_sheet(l, h=1/32):
    x, xc, w = ts_nodes(h); u = l*x
    return (N/l)**2*2*np.sum(w*l*(l - u)*M_fil_s(a, 0.0*u, u))
for l in [50e-3, 200e-3, 1000e-3]:
    Ls = L_sheet(l)
    for t in [0.1e-3, 0.02e-3]:
        v = L1(N, a - t/2, a + t/2, 0.0, l, 1/16)
        print(f"l/a={l/a:6.1f} t={t*1e3:5.2f} mm: coefficient {((Ls - v)/Ls)/(t/(3*a)):.5f}", flush=True)
