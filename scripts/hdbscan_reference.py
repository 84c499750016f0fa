"""Reference labels for test/cluster-hdbscan.test.ts from scikit-learn's HDBSCAN.

Usage: python3 scripts/hdbscan_reference.py IN.json OUT.json

IN.json: {"cases": [{"name": str, "n": int, "dist": [n*n floats, row-major], "settings": [[min_cluster_size, min_samples], ...]}]}
  A case may give "pdds": [{"weights": [m floats], "rows": [m*k floats], "k": int}] instead of "dist": the
  distance matrix is then the EMD between the PDDs with the L-infinity ground distance between rows
  (Rubner, Tomasi & Guibas, IJCV 2000), solved exactly by POT's ot.emd2, and returned as "dist".
OUT.json: per case and setting
  - "public": labels and probabilities from sklearn.cluster.HDBSCAN(metric="precomputed", ...) with
    its defaults (eom selection, allow_single_cluster=False, alpha=1, cluster_selection_epsilon=0);
  - "stable": labels from scikit-learn's own building blocks (mutual_reachability_graph,
    mst_from_mutual_reachability, make_single_linkage, tree_to_labels) with the spanning-tree edges
    sorted by a STABLE sort, so equal weights keep Prim order; the public estimator uses numpy's
    default (unstable) argsort there, which is the only place the two can differ;
  - "tie_invariant": whether the pipeline gives the same partition under eight different orders of
    equal weights (stable, reversed, six seeded random ones): only then is scikit-learn's public
    result independent of numpy's sort;
  - "core": core distances (scikit-learn convention: min_samples-th smallest row entry, diagonal included);
  - "mst_weights": spanning-tree edge weights in Prim order, "tied_weights": how many weights occur more than once.
"""
import json
import sys
import warnings

import numpy as np
import sklearn
from sklearn.cluster import HDBSCAN
from sklearn.cluster._hdbscan._linkage import make_single_linkage, mst_from_mutual_reachability
from sklearn.cluster._hdbscan._reachability import mutual_reachability_graph
from sklearn.cluster._hdbscan._tree import tree_to_labels


def labels_for_order(mst, order, mcs):
    slt = make_single_linkage(np.ascontiguousarray(mst[order]))
    return tree_to_labels(slt, mcs, "eom", False, 0.0, None)


def canonical(labels):
    """Clusters renumbered by first appearance, noise kept as -1."""
    seen = {}
    out = []
    for x in labels:
        if x < 0:
            out.append(-1)
        else:
            out.append(seen.setdefault(int(x), len(seen)))
    return out


def emd_matrix(pdds):
    import ot
    from scipy.spatial.distance import cdist

    n = len(pdds)
    dist = np.zeros((n, n))
    rows = [np.array(p["rows"], dtype=np.float64).reshape(-1, p["k"]) for p in pdds]
    weights = [np.array(p["weights"], dtype=np.float64) for p in pdds]
    for i in range(n):
        for j in range(i + 1, n):
            ground = cdist(rows[i], rows[j], metric="chebyshev")
            d = float(ot.emd2(weights[i], weights[j], ground))
            dist[i, j] = dist[j, i] = d
    return dist


def main() -> None:
    with open(sys.argv[1]) as f:
        data = json.load(f)
    out = {"sklearn_version": sklearn.__version__, "cases": []}
    for case in data["cases"]:
        n = case["n"]
        if "pdds" in case:
            dist = emd_matrix(case["pdds"])
        else:
            dist = np.array(case["dist"], dtype=np.float64).reshape(n, n)
        results = []
        for mcs, ms in case["settings"]:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                model = HDBSCAN(metric="precomputed", min_cluster_size=mcs, min_samples=ms, copy=True).fit(dist)
            ms_eff = mcs if ms is None else ms
            core = np.partition(dist, ms_eff - 1, axis=1)[:, ms_eff - 1]
            mr = mutual_reachability_graph(dist.copy(), min_samples=ms_eff)
            mst = mst_from_mutual_reachability(mr)
            w = mst["distance"]
            stable_labels, stable_probs = labels_for_order(mst, np.argsort(w, kind="stable"), mcs)
            # the same pipeline under other orders among equal weights: reversed Prim order and six
            # seeded random orders; when every order gives the same partition, sklearn's result does
            # not depend on how numpy's sort happens to place equal weights
            tie_rng = np.random.default_rng(12345)
            orders = [np.lexsort((-np.arange(len(w)), w))] + [np.lexsort((tie_rng.permutation(len(w)), w)) for _ in range(6)]
            reference = canonical(stable_labels)
            tie_invariant = all(canonical(labels_for_order(mst, o, mcs)[0]) == reference for o in orders)
            _, counts = np.unique(w, return_counts=True)
            results.append(
                {
                    "min_cluster_size": mcs,
                    "min_samples": ms,
                    "public": {"labels": model.labels_.tolist(), "probabilities": model.probabilities_.tolist()},
                    "stable": {"labels": stable_labels.tolist(), "probabilities": stable_probs.tolist()},
                    "core": core.tolist(),
                    "mst_weights": w.tolist(),
                    "tied_weights": int(np.sum(counts[counts > 1])),
                    "tie_invariant": bool(tie_invariant),
                }
            )
        entry = {"name": case["name"], "results": results}
        if "pdds" in case:
            entry["dist"] = dist.ravel().tolist()
        out["cases"].append(entry)
    with open(sys.argv[2], "w") as f:
        json.dump(out, f)


if __name__ == "__main__":
    main()
