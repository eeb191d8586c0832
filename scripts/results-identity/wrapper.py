#!/usr/bin/env python3
"""Capture wrapper: runs the real fluxpick, then copies the JSON/CSV outputs to a capture
folder keyed by the command line (file arguments replaced by their content hash)."""
import hashlib, os, subprocess, sys, shutil
REAL = os.environ.get("FP_REAL", os.path.join(os.path.dirname(os.path.abspath(__file__)), "fluxpick.real"))
CAP = os.environ.get("FP_CAPTURE", "/tmp/fluxpick-capture")
args = sys.argv[1:]
r = subprocess.run([REAL] + args)
try:
    key_parts, outdirs = [], []
    i = 0
    while i < len(args):
        a = args[i]
        if a in ("--out", "-o") and i + 1 < len(args):
            key_parts.append(a + "=OUT"); outdirs.append(args[i + 1]); i += 2; continue
        if os.path.isfile(a):
            with open(a, "rb") as f:
                key_parts.append("file:" + hashlib.sha256(f.read()).hexdigest()[:16])
        else:
            key_parts.append(a)
        i += 1
    if args and args[0] in ("solve", "sweep", "compare", "map") and r.returncode == 0:
        key = hashlib.sha256("\0".join(key_parts).encode()).hexdigest()[:20]
        dest = os.path.join(CAP, args[0] + "-" + key)
        if not os.path.exists(dest):
            os.makedirs(dest + ".tmp%d" % os.getpid(), exist_ok=True)
            tmp = dest + ".tmp%d" % os.getpid()
            for d in outdirs:
                if os.path.isdir(d):
                    for n in sorted(os.listdir(d)):
                        if n.endswith((".json", ".csv", ".jsonl")):
                            shutil.copy(os.path.join(d, n), os.path.join(tmp, n))
            with open(os.path.join(tmp, "ARGS"), "w") as f:
                f.write(" ".join(key_parts) + "\n")
            try:
                os.rename(tmp, dest)
            except OSError:
                shutil.rmtree(tmp, ignore_errors=True)
except Exception as e:
    sys.stderr.write("")
sys.exit(r.returncode)
