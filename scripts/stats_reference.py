"""Reference values for test/cluster-stats.test.ts.

Usage: python3 scripts/stats_reference.py IN.json OUT.json

IN.json: {"ari": [{"a": [labels], "b": [labels]}], "spearman": [{"x": [floats], "y": [floats]}]}
OUT.json: {"ari": [sklearn.metrics.adjusted_rand_score(a, b)], "spearman": [scipy.stats.spearmanr(x, y).statistic],
           "rankdata": [scipy.stats.rankdata(x, method="average") per spearman case]}
NaN results are written as null.
"""
import json
import math
import sys

import scipy
import sklearn
from scipy.stats import rankdata, spearmanr
from sklearn.metrics import adjusted_rand_score


def clean(v):
    v = float(v)
    return None if math.isnan(v) else v


def main() -> None:
    with open(sys.argv[1]) as f:
        data = json.load(f)
    out = {
        "versions": {"sklearn": sklearn.__version__, "scipy": scipy.__version__},
        "ari": [clean(adjusted_rand_score(c["a"], c["b"])) for c in data["ari"]],
        "spearman": [clean(spearmanr(c["x"], c["y"]).statistic) for c in data["spearman"]],
        "rankdata": [rankdata(c["x"], method="average").tolist() for c in data["spearman"]],
    }
    with open(sys.argv[2], "w") as f:
        json.dump(out, f)


if __name__ == "__main__":
    main()
