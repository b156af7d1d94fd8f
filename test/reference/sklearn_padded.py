"""scikit-learn reference for judged items that the run never retrieved.

Usage: /usr/bin/python3 sklearn_padded.py cases.json results.json

Each case: {"grades": [...], "scores": [...], "unretrieved": [...], "k": int}. The unretrieved judged items
are padded onto the list at score -inf (in effect: a finite score below every retrieved item), so their grades enter the ideal DCG,
as the common practice for judged collections has it. Writes per case:
  ndcg_padded   sklearn ndcg_score(y_true padded, y_score padded with -inf, k, ignore_ties=False)
                (equals the convention whenever k <= the retrieved list's length: the padded items then
                sit below the cut-off and add nothing to the DCG)
  ndcg_masked   sklearn dcg_score of the padded scores with the padded items' grades set to 0 (they were
                not retrieved, so they earn nothing) over sklearn dcg_score of the true grades ranked by
                themselves (the ideal from every judged item): the convention at any k
"""
import sys

try:
    import numpy as np
    from sklearn.metrics import dcg_score, ndcg_score
except ImportError as error:  # reported by the test as a failure, never a skip
    sys.stderr.write(f"reference packages missing for /usr/bin/python3: {error}\n")
    sys.exit(3)

from reference_cases import map_cases, number


def reference(case):
    grades = case["grades"] + case["unretrieved"]
    # -inf in effect: sklearn rejects infinite scores, so the pad is a finite score below every retrieved one.
    floor = (min(case["scores"]) if case["scores"] else 0.0) - 1.0
    scores = case["scores"] + [floor] * len(case["unretrieved"])
    masked = case["grades"] + [0] * len(case["unretrieved"])
    if len(grades) == 1:
        # sklearn takes a one-item list for a binary target and refuses it; a grade-0 item at the very
        # bottom adds nothing to DCG or ideal DCG.
        grades, scores, masked = grades + [0], scores + [floor - 1.0], masked + [0]
    y_true = np.asarray([grades], dtype=float)
    y_score = np.asarray([scores], dtype=float)
    k = case["k"]
    ideal = dcg_score(y_true, y_true, k=k, ignore_ties=False)
    achieved = dcg_score(np.asarray([masked], dtype=float), y_score, k=k, ignore_ties=False)
    return {
        "ndcg_padded": number(ndcg_score(y_true, y_score, k=k, ignore_ties=False)),
        "ndcg_masked": number(achieved / ideal) if ideal > 0 else None,
    }


if __name__ == "__main__":
    map_cases(reference)
