"""Weighted means with numpy.average(values, weights=w): the outside reference for query weights.

Input: {"columns": [[...], ...], "weights": [...]} with null for an undefined value or weight.
Output: one weighted mean per column over the entries where both are defined (null when none).
"""
import json
import sys

import numpy as np

with open(sys.argv[1]) as f:
    data = json.load(f)
weights = np.array([np.nan if w is None else w for w in data["weights"]], dtype=float)
out = []
for column in data["columns"]:
    values = np.array([np.nan if v is None else v for v in column], dtype=float)
    keep = ~np.isnan(values) & ~np.isnan(weights)
    out.append(float(np.average(values[keep], weights=weights[keep])) if keep.any() and weights[keep].sum() > 0 else None)
with open(sys.argv[2], "w") as f:
    json.dump(out, f)
