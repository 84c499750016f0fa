"""Reference values for test/cluster-embedding.test.ts.

Usage: python3 scripts/embedding_reference.py IN.json OUT.json

IN.json: {"cases": [{"n": int, "dist": [n*n floats], "coords": [n*2 floats], "ks": [int, ...]}]}
OUT.json: per case
  - "trustworthiness": sklearn.manifold.trustworthiness(dist, coords, n_neighbors=k, metric="precomputed") per k;
  - "eigenvalues": the two largest eigenvalues of B = -1/2 J D^2 J (classical scaling, Torgerson 1952)
    from numpy.linalg.eigvalsh;
  - "stress1": Kruskal's stress-1 of the coordinates, sqrt(sum (d_ij(X) - delta_ij)^2 / sum d_ij(X)^2)
    over pairs i < j (Kruskal, Psychometrika 1964), computed with scipy.spatial.distance.pdist.
"""
import json
import sys

import numpy as np
from scipy.spatial.distance import pdist, squareform
from sklearn.manifold import trustworthiness


def main() -> None:
    with open(sys.argv[1]) as f:
        data = json.load(f)
    out = {"cases": []}
    for case in data["cases"]:
        n = case["n"]
        dist = np.array(case["dist"], dtype=np.float64).reshape(n, n)
        coords = np.array(case["coords"], dtype=np.float64).reshape(n, 2)
        tw = [float(trustworthiness(dist, coords, n_neighbors=k, metric="precomputed")) for k in case["ks"]]
        j = np.eye(n) - np.ones((n, n)) / n
        b = -0.5 * j @ (dist**2) @ j
        eig = np.linalg.eigvalsh((b + b.T) / 2)[::-1][:2]
        plotted = pdist(coords)
        target = squareform(dist, checks=False)
        stress1 = float(np.sqrt(np.sum((plotted - target) ** 2) / np.sum(plotted**2)))
        out["cases"].append({"trustworthiness": tw, "eigenvalues": eig.tolist(), "stress1": stress1})
    with open(sys.argv[2], "w") as f:
        json.dump(out, f)


if __name__ == "__main__":
    main()
