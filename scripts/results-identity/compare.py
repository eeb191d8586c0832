#!/usr/bin/env python3
"""Compares two capture folders: every file of every run, bytes first, then (for JSON) value by value
with the run times left out (solve.*_s, accuracy passes' seconds)."""
import json, os, sys, re
a, b = sys.argv[1], sys.argv[2]
runs_a, runs_b = set(os.listdir(a)), set(os.listdir(b))
print(f"runs: before {len(runs_a)}, after {len(runs_b)}, in both {len(runs_a & runs_b)}")
for r in sorted(runs_a ^ runs_b):
    print("  only in", "before" if r in runs_a else "after", r, open(os.path.join(a if r in runs_a else b, r, "ARGS")).read().strip()[:120])
TIMING = re.compile(r'^(mesh|assemble|factor|solve|post)_s$')
def strip(v, path=()):
    if isinstance(v, dict):
        return {k: strip(x, path + (k,)) for k, x in v.items()
                if not ((len(path) and path[-1] == "solve" and TIMING.match(k)) or k == "seconds")}
    if isinstance(v, list):
        return [strip(x, path) for x in v]
    return v
files = same_bytes = same_values = 0
diffs = []
for r in sorted(runs_a & runs_b):
    for f in sorted(set(os.listdir(os.path.join(a, r))) | set(os.listdir(os.path.join(b, r)))):
        if f == "ARGS": continue
        pa, pb = os.path.join(a, r, f), os.path.join(b, r, f)
        if not (os.path.exists(pa) and os.path.exists(pb)):
            diffs.append((r, f, "missing on one side")); continue
        files += 1
        ba, bb = open(pa, "rb").read(), open(pb, "rb").read()
        # temporary folders of the tests differ from run to run
        ba, bb = (re.sub(rb"/tmp/\.tmp[A-Za-z0-9]+", b"/tmp/TMP", x) for x in (ba, bb))
        if ba == bb:
            same_bytes += 1; same_values += 1; continue
        if f.endswith(".json"):
            ja, jb = strip(json.loads(ba)), strip(json.loads(bb))
            if ja == jb:
                same_values += 1; continue
        elif f.endswith(".csv"):
            # sweep.csv has no run times; compare text
            pass
        diffs.append((r, f, "differs"))
print(f"files compared: {files}; identical bytes (temporary folder names aside): {same_bytes}; identical apart from run times: {same_values}")
for d in diffs:
    print("  DIFF", *d, open(os.path.join(a, d[0], "ARGS")).read().strip()[:150])
