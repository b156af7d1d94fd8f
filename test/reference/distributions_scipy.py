"""Reference tails of the t and normal distributions, computed with scipy 1.10 (Debian's python3-scipy).

Usage: distributions_scipy.py IN.json OUT.json (as run by runPython.ts). IN holds
  "t": [[t, dof], ...]  and  "z": [z, ...].
OUT holds, in the same order,
  "t_two_sided": 2*stdtr(dof, -|t|), exactly the expression scipy.stats.ttest_rel uses for its two-sided p,
  "norm_sf":     scipy.stats.norm.sf(z), the tail behind wilcoxon's normal approximation,
and "scipy", the version.
"""
import json
import sys

try:
    import numpy as np
    import scipy
    from scipy import special, stats
except ModuleNotFoundError as missing:
    sys.stderr.write(f"scipy reference unavailable: {missing}; install python3-scipy for /usr/bin/python3\n")
    sys.exit(3)

with open(sys.argv[1]) as f:
    cases = json.load(f)

pairs = np.asarray(cases["t"], dtype=float).reshape(-1, 2)
t = np.abs(pairs[:, 0])
dof = pairs[:, 1]
out = {
    "scipy": scipy.__version__,
    "t_two_sided": (special.stdtr(dof, -t) * 2).tolist(),
    "norm_sf": stats.norm.sf(np.asarray(cases["z"], dtype=float)).tolist(),
}
with open(sys.argv[2], "w") as f:
    json.dump(out, f)
