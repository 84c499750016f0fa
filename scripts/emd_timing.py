"""POT's time for one EMD between PDDs, for `npm run bench sift`: ot.emd2 (network simplex of Bonneel et al., ACM TOG
2011) on an L-infinity (Chebyshev) ot.dist cost matrix, as a practitioner would call it, over the same pairs the
benchmark times polysift on.

Usage: python3 scripts/emd_timing.py PAIRS.json OUT.json
PAIRS: {"k": k, "pdds": [{"rows": [...n*k], "weights": [...n]}, ...], "pairs": [[a, b], ...]}
OUT: {"cpuMicroseconds": per pair (best of 3 passes), "emd": [...] (first pass)}
"""
import json
import sys
import time

import numpy as np
import ot


def main():
    with open(sys.argv[1]) as f:
        data = json.load(f)
    k = data["k"]
    pdds = []
    for p in data["pdds"]:
        w = np.asarray(p["weights"], dtype=np.float64)
        pdds.append((np.asarray(p["rows"], dtype=np.float64).reshape(-1, k), w / w.sum()))
    pairs = data["pairs"]
    values, best = [], float("inf")
    for rep in range(3):
        t = time.process_time()
        for a, b in pairs:
            d = ot.emd2(pdds[a][1], pdds[b][1], ot.dist(pdds[a][0], pdds[b][0], metric="chebyshev"))
            if rep == 0:
                values.append(float(d))
        best = min(best, (time.process_time() - t) / len(pairs) * 1e6)
    with open(sys.argv[2], "w") as f:
        json.dump({"cpuMicroseconds": best, "emd": values}, f)


if __name__ == "__main__":
    main()
