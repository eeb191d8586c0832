from common import *
mp.mp.dps = 30
for (a,b,d,ref) in [(10e-3,15e-3,5e-3,11.84650e-9),(10e-3,10e-3,10e-3,4.940785e-9)]:
    v = M_fil(a,b,d); vm = M_fil_mp(a,b,d)
    print(f"a={a} b={b} d={d}: numpy {v*1e9:.12f} nH, mpmath {mp.nstr(vm*1e9,20)} nH, published {ref*1e9} nH, rel diff {(v-ref)/ref:.2e}, np-vs-mp {float((v-vm)/vm):.2e}")
# spot checks np vs mp near singular
import numpy as np
for (a,b,d) in [(0.02,0.02+1e-9,1e-9),(0.015,0.025,0.0),(0.02,0.02,1e-12),(0.015,0.025,0.02)]:
    v=M_fil(a,b,d); vm=M_fil_mp(a,b,d); print(a,b,d, v, float((v-vm)/vm))
