"""Reference EMD values with POT (Python Optimal Transport, ot.emd2: network simplex of Bonneel et al.,
"Displacement interpolation using Lagrangian mass transport", ACM TOG 2011), for test/metric-emd.test.ts.

Usage: python3 scripts/emd-reference.py IN.json OUT.json
IN: {"instances": [{"k": k, "a": {"rows": [...n*k], "weights": [...n]}, "b": {...}}]}
OUT: {"emd": [...]}  -- ground distance L-infinity between rows, weights clipped at 0 and renormalised to 1.
"""
import json
import sys

import numpy as np
import ot


def side(p, k):
    rows = np.asarray(p["rows"], dtype=np.float64).reshape(-1, k)
    w = np.clip(np.asarray(p["weights"], dtype=np.float64), 0.0, None)
    return rows, w / w.sum()


def main():
    with open(sys.argv[1]) as f:
        data = json.load(f)
    out = []
    for inst in data["instances"]:
        k = inst["k"]
        ra, wa = side(inst["a"], k)
        rb, wb = side(inst["b"], k)
        cost = np.abs(ra[:, None, :] - rb[None, :, :]).max(axis=2)
        out.append(float(ot.emd2(wa, wb, cost, numItermax=100_000_000)))
    with open(sys.argv[2], "w") as f:
        json.dump({"emd": out}, f)


if __name__ == "__main__":
    main()
