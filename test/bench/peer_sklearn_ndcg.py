"""Benchmark peer: mean NDCG@10 the way many notebooks do it, pandas groupby and one
scikit-learn ndcg_score call per query.

ndcg_score treats y_true as the gain, so 2^grade - 1 is passed for exponential gain; its default
(ignore_ties=False) averages over tied scores (McSherry & Najork 2008), like our default.
Queries with nothing relevant are skipped; single-item queries score 1 when relevant.
Reads CSV, or TSV when the name ends in .tsv. Prints one JSON line: read and compute seconds, queries counted, mean.
"""
import json
import sys
import time

import numpy as np
import pandas as pd
from sklearn.metrics import ndcg_score

K = 10


def main(path: str) -> None:
    t0 = time.perf_counter()
    df = pd.read_csv(path, sep="\t" if path.endswith(".tsv") else ",", usecols=["query", "grade", "score"])
    t1 = time.perf_counter()
    values = []
    for _, group in df.groupby("query", sort=False):
        gain = np.exp2(group["grade"].to_numpy(dtype=np.float64)) - 1.0
        if gain.max() <= 0:
            continue
        if len(gain) == 1:
            values.append(1.0)
            continue
        values.append(ndcg_score([gain], [group["score"].to_numpy(dtype=np.float64)], k=K))
    t2 = time.perf_counter()
    print(json.dumps({"read_s": t1 - t0, "compute_s": t2 - t1, "queries": len(values), "mean": float(np.mean(values))}))


if __name__ == "__main__":
    main(sys.argv[1])
