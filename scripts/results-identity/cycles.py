#!/usr/bin/env python3
"""Module dependency cycles among the root package's top-level modules (src/X.rs or src/X/)."""
import os, re, sys, itertools
root = sys.argv[1] if len(sys.argv) > 1 else "src"
mods = {}
for dp, _, fs in os.walk(root):
    for f in fs:
        if not f.endswith(".rs"): continue
        p = os.path.join(dp, f); rel = os.path.relpath(p, root)
        top = rel.split(os.sep)[0].removesuffix(".rs")
        if top in ("lib", "main"): continue
        mods.setdefault(top, set())
        for m in re.findall(r"crate::([a-z_]+)", open(p).read()):
            if m != top: mods[top].add(m)
for m in mods: mods[m] &= set(mods)
# find cycles (strongly connected components)
idx, low, st, on, sccs, n = {}, {}, [], set(), [], [0]
def sc(v):
    idx[v] = low[v] = n[0]; n[0] += 1; st.append(v); on.add(v)
    for w in mods[v]:
        if w not in idx: sc(w); low[v] = min(low[v], low[w])
        elif w in on: low[v] = min(low[v], idx[w])
    if low[v] == idx[v]:
        c = []
        while True:
            w = st.pop(); on.discard(w); c.append(w)
            if w == v: break
        sccs.append(c)
for v in mods:
    if v not in idx: sc(v)
cyc = [c for c in sccs if len(c) > 1]
for c in cyc:
    print("cycle:", " <-> ".join(sorted(c)), {a: sorted(mods[a] & set(c)) for a in c})
print(f"{len(mods)} modules, {len(cyc)} cycles")
