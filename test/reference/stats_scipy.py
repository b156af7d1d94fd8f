"""Reference values for the paired statistics, computed with scipy.

Reads a JSON list of cases on stdin, writes a JSON list of results on stdout. Each case has
"a" and "b" (paired samples; d = b - a) and optional "wilcoxon_method" ("auto" or "approx") and
"exact_permutation" (true to run scipy's exact sign-flip permutation test) and "bootstrap" (a number of
resamples for scipy's percentile bootstrap interval of the mean difference).
Run with Debian's /usr/bin/python3, where python3-scipy is installed.
"""
import json
import math
import sys

try:
    import numpy as np
    import scipy
    from scipy import stats
except ModuleNotFoundError as missing:
    sys.stderr.write(f"scipy reference unavailable: {missing}; install python3-scipy for /usr/bin/python3\n")
    sys.exit(3)


def clean(x):
    x = float(x)
    return None if math.isnan(x) else x


def run(case):
    a = np.asarray(case["a"], dtype=float)
    b = np.asarray(case["b"], dtype=float)
    out = {"scipy": scipy.__version__}
    t = stats.ttest_rel(b, a)
    out["t"] = clean(t.statistic)
    out["t_p"] = clean(t.pvalue)
    method = case.get("wilcoxon_method", "auto")
    if np.any(b - a != 0):
        w = stats.wilcoxon(b, a, zero_method="wilcox", correction=False, alternative="two-sided", method=method)
        out["w_stat"] = clean(w.statistic)
        out["w_p"] = clean(w.pvalue)
    if case.get("exact_permutation"):
        def mean_difference(x, y, axis):
            return np.mean(x - y, axis=axis)

        r = stats.permutation_test((b, a), mean_difference, permutation_type="samples", vectorized=True,
                                   n_resamples=np.inf, alternative="two-sided")
        out["perm_p"] = clean(r.pvalue)
    if case.get("bootstrap"):
        r = stats.bootstrap((b - a,), np.mean, method="percentile", n_resamples=case["bootstrap"],
                            confidence_level=0.95, random_state=np.random.default_rng(7))
        out["boot_low"] = clean(r.confidence_interval.low)
        out["boot_high"] = clean(r.confidence_interval.high)
    return out


json.dump([run(case) for case in json.load(sys.stdin)], sys.stdout)
