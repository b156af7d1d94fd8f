"""The JSON in and out shared by the scikit-learn reference scripts: read {"cases": [...]} from argv[1],
write {"results": [...]} to argv[2], one result per case, NaN written as null."""
import json
import math
import sys


def number(x):
    x = float(x)
    return None if math.isnan(x) else x


def map_cases(compute):
    with open(sys.argv[1]) as f:
        cases = json.load(f)["cases"]
    out = [compute(case) for case in cases]
    with open(sys.argv[2], "w") as f:
        json.dump({"results": out}, f)
