"""Per-grade score quartiles and histogram counts with numpy: the outside reference for score diagnostics.

Input: {"grades": [...], "scores": [...], "edges": [...]} (null grade = unjudged, null score = missing).
Output: {grade as text: {"q1", "median", "q3", "bins"}} with numpy.percentile (linear, its default) and
numpy.histogram on the given edges (last bin closed, numpy's documented rule).
"""
import json
import sys

import numpy as np

with open(sys.argv[1]) as f:
    data = json.load(f)
groups = {}
for g, s in zip(data["grades"], data["scores"]):
    if s is None:
        continue
    groups.setdefault("unjudged" if g is None else str(float(g)), []).append(s)
out = {}
for key, scores in groups.items():
    a = np.array(scores, dtype=float)
    q1, med, q3 = np.percentile(a, [25, 50, 75])
    counts, _ = np.histogram(a, bins=np.array(data["edges"], dtype=float))
    out[key] = {"q1": float(q1), "median": float(med), "q3": float(q3), "bins": [int(c) for c in counts]}
with open(sys.argv[2], "w") as f:
    json.dump(out, f)
