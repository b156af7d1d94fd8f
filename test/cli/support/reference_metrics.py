"""Per-query reference values for the command-line tests, from scikit-learn and scipy.

Reads a CSV dump (query, product_id, grade, score) and prints JSON: {query: {...}} with
  ndcg10 — sklearn.metrics.ndcg_score(k=10) on gains 2^g - 1; sklearn's default ignore_ties=False
           averages over tied scores (McSherry & Najork 2008)
  dcg5   — sklearn.metrics.dcg_score(k=5) on the same gains
  ap     — sklearn.metrics.average_precision_score with relevance grade >= 1 (only meaningful
           without tied scores: sklearn treats a tie as one threshold)
  tau    — scipy.stats.kendalltau(score, grade), tau-b
Values a library does not define (one item; nothing relevant; constant input) are null.
"""
import csv
import json
import math
import sys
from collections import OrderedDict

import numpy as np
from scipy.stats import kendalltau
from sklearn.metrics import average_precision_score, dcg_score, ndcg_score


def finite(x):
    x = float(x)
    return x if math.isfinite(x) else None


def main(path):
    groups = OrderedDict()
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            groups.setdefault(row["query"], []).append((float(row["grade"]), float(row["score"])))
    out = {}
    for query, rows in groups.items():
        grade = np.array([g for g, _ in rows])
        score = np.array([s for _, s in rows])
        gain = np.exp2(grade) - 1.0
        relevant = grade >= 1
        values = {"ndcg10": None, "dcg5": None, "ap": None, "tau": None}
        if len(rows) > 1:
            values["dcg5"] = finite(dcg_score([gain], [score], k=5))
            if relevant.any():
                values["ndcg10"] = finite(ndcg_score([gain], [score], k=10))
                values["ap"] = finite(average_precision_score(relevant, score))
            values["tau"] = finite(kendalltau(score, grade).statistic)
        out[query] = values
    print(json.dumps(out))


if __name__ == "__main__":
    main(sys.argv[1])
