"""Outside reference values for the metric tests, computed by scikit-learn and scipy.

Usage: /usr/bin/python3 sklearn_scipy.py cases.json results.json

Each case: {"grades": [...], "scores": [...], "k": int or null}. For each case this writes
  dcg_tie_averaged, ndcg_tie_averaged   sklearn dcg_score / ndcg_score with ignore_ties=False
  dcg_as_sorted, ndcg_as_sorted         the same with ignore_ties=True (only meaningful without tied scores)
  tau                                   scipy.stats.kendalltau (tau-b, the default variant)
"""
import sys

try:
    import numpy as np
    from scipy.stats import kendalltau
    from sklearn.metrics import dcg_score, ndcg_score
except ImportError as error:  # reported by the test as a failure, never a skip
    sys.stderr.write(f"reference packages missing for /usr/bin/python3: {error}\n")
    sys.exit(3)

from reference_cases import map_cases, number


def reference(case):
    y_true = np.asarray([case["grades"]], dtype=float)
    y_score = np.asarray([case["scores"]], dtype=float)
    k = case["k"]
    tau = kendalltau(case["scores"], case["grades"])
    return {
        "dcg_tie_averaged": number(dcg_score(y_true, y_score, k=k, ignore_ties=False)),
        "ndcg_tie_averaged": number(ndcg_score(y_true, y_score, k=k, ignore_ties=False)),
        "dcg_as_sorted": number(dcg_score(y_true, y_score, k=k, ignore_ties=True)),
        "ndcg_as_sorted": number(ndcg_score(y_true, y_score, k=k, ignore_ties=True)),
        "tau": number(tau[0]),
    }


if __name__ == "__main__":
    map_cases(reference)
