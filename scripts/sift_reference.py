"""A short reference for `npm run bench sift`: the duplicate search a practitioner would write with numpy, scipy and
POT (Python Optimal Transport), timed stage by stage on the benchmark's own files.

- read: split the multi-block CIF on `data_` lines; cell, symmetry operations (listed, or from the space-group
  symbol for the few standard settings the benchmark writes), atom sites. Enough for the benchmark's CIFs, which
  are simple; a real script would use a CIF library.
- invariants: PDD ("Resolving the data ambiguity for periodic crystals", NeurIPS 2022): every motif point's k
  nearest neighbours among the lattice translates of the motif (scipy cKDTree), rows sorted, equal rows merged,
  weights 1/m; AMD as the weighted column means ("Average minimum distances of periodic point sets", MATCH 2022).
- duplicates: structures in energy order; each tries the kept ones in order of the AMD bound max_j |AMD_j - AMD'_j|
  (a lower bound of the EMD), solving ot.emd2 on an L-infinity (Chebyshev) ot.dist matrix, and stops as soon as the
  bound exceeds min(tolerance, best EMD so far); it joins the nearest kept structure within the tolerance or is kept.

Usage: python3 scripts/sift_reference.py SEARCH.cif ENERGIES.csv OUT.json [k] [tolerance]
OUT: {"seconds": {"read": s, "invariants": s, "duplicates": s}, "cpuSeconds": {...}, "kept": n, "emds": n,
      "keptOf": {id: kept id}}
"""
import json
import sys
import time

import numpy as np
import ot
from scipy.spatial import cKDTree

# Operations of the settings the benchmark writes as a symbol only (International Tables, Vol. A).
SYMBOL_OPS = {
    "P 1": ["x,y,z"],
    "P -1": ["x,y,z", "-x,-y,-z"],
    "P 1 21 1": ["x,y,z", "-x,y+1/2,-z"],
    "P 1 21/c 1": ["x,y,z", "-x,y+1/2,-z+1/2", "-x,-y,-z", "x,-y+1/2,z+1/2"],
    "P 21 21 21": ["x,y,z", "-x+1/2,-y,z+1/2", "-x,y+1/2,-z+1/2", "x+1/2,-y+1/2,-z"],
    "C 1 2/c 1": ["x,y,z", "-x,y,-z+1/2", "-x,-y,-z", "x,-y,z+1/2",
                  "x+1/2,y+1/2,z", "-x+1/2,y+1/2,-z+1/2", "-x+1/2,-y+1/2,-z", "x+1/2,-y+1/2,z+1/2"],
    "P b c a": ["x,y,z", "-x+1/2,-y,z+1/2", "-x,y+1/2,-z+1/2", "x+1/2,-y+1/2,-z",
                "-x,-y,-z", "x+1/2,y,-z+1/2", "x,-y+1/2,z+1/2", "-x+1/2,y+1/2,z"],
}


def parse_op(text):
    rot = np.zeros((3, 3))
    trans = np.zeros(3)
    for row, part in enumerate(text.replace(" ", "").split(",")):
        term = ""
        for ch in part + "+":
            if ch in "+-" and term:
                sign = -1.0 if term[0] == "-" else 1.0
                body = term.lstrip("+-")
                factor, _, axis = body.rpartition("*")
                if axis in ("x", "y", "z"):
                    rot[row, "xyz".index(axis)] += sign * (float(factor) if factor else 1.0)
                elif "/" in body:
                    p, q = body.split("/")
                    trans[row] += sign * float(p) / float(q)
                else:
                    trans[row] += sign * float(body)
                term = ""
            term += ch
    return rot, trans


def read_blocks(path):
    """Yield (id, cell lengths and angles, operations, fractional coordinates) per data block."""
    with open(path) as f:
        text = f.read()
    for chunk in text.split("\ndata_")[1:]:
        lines = chunk.split("\n")
        name = lines[0].strip()
        items, ops, atoms, loop, symbol = {}, [], [], None, None
        for line in lines[1:]:
            line = line.strip()
            if not line:
                continue
            if line == "loop_":
                loop = []
                continue
            if line.startswith("_"):
                if loop is not None and (not loop or loop[-1].startswith("_")) and len(line.split()) == 1:
                    loop.append(line)
                    continue
                loop = None
                key, value = line.split(None, 1)
                items[key] = value.strip("'")
                continue
            if loop is not None and loop[0] == "_space_group_symop_operation_xyz":
                ops.append(line.strip("'"))
            elif loop is not None and loop[0] == "_atom_site_label":
                f = line.split()
                atoms.append([float(f[2]), float(f[3]), float(f[4])])
        symbol = items.get("_space_group_name_H-M_alt")
        if not ops:
            ops = SYMBOL_OPS.get(symbol, ["x,y,z"])
        cell = [float(items["_cell_length_" + a]) for a in "abc"] + [float(items["_cell_angle_" + a]) for a in ("alpha", "beta", "gamma")]
        yield name, cell, [parse_op(o) for o in ops], np.array(atoms)


def basis(cell):
    a, b, c, al, be, ga = cell
    al, be, ga = np.radians([al, be, ga])
    cx = np.cos(be)
    cy = (np.cos(al) - np.cos(be) * np.cos(ga)) / np.sin(ga)
    return np.array([[a, 0, 0], [b * np.cos(ga), b * np.sin(ga), 0], [c * cx, c * cy, c * np.sqrt(1 - cx * cx - cy * cy)]])


def pdd(cell, ops, frac, k):
    # Motif: every operation applied, wrapped, images of one site on one point merged.
    pts = np.concatenate([(frac @ r.T + t) % 1.0 for r, t in ops])
    if len(ops) > 1:
        diff = pts[:, None, :] - pts[None, :, :]
        same = np.abs(diff - np.round(diff)).max(axis=2) < 1e-4
        pts = pts[np.argmax(same, axis=1) == np.arange(len(pts))]
    B = basis(cell)
    motif = pts @ B
    m = len(motif)
    # Translates within a radius that holds k neighbours (about 3x the k-neighbour sphere's volume).
    volume = abs(np.linalg.det(B))
    radius = 1.5 * (3 * k * volume / (4 * np.pi * m)) ** (1 / 3) + 2.0
    spacing = volume / np.linalg.norm(np.cross(B[[1, 2, 0]], B[[2, 0, 1]]), axis=1)
    reps = np.ceil(radius / spacing).astype(int)
    grid = np.array(np.meshgrid(*[np.arange(-r, r + 1) for r in reps], indexing="ij")).reshape(3, -1).T
    cloud = (grid @ B)[:, None, :] + motif[None, :, :]
    dist, _ = cKDTree(cloud.reshape(-1, 3)).query(motif, k + 1)
    rows = dist[:, 1:]
    order = np.lexsort(rows.T[::-1])
    rows = rows[order]
    # Merge equal rows (neighbours in the sorted order), weights 1/m added.
    new = np.concatenate([[True], np.abs(np.diff(rows, axis=0)).max(axis=1) > 1e-8])
    group = np.cumsum(new) - 1
    return rows[new], np.bincount(group) / m


def main():
    cif, energies_csv, out = sys.argv[1:4]
    k = int(sys.argv[4]) if len(sys.argv) > 4 else 100
    tol = float(sys.argv[5]) if len(sys.argv) > 5 else 0.04
    seconds, cpu = {}, {}

    t, c = time.perf_counter(), time.process_time()
    blocks = list(read_blocks(cif))
    energy = {}
    with open(energies_csv) as f:
        next(f)
        for line in f:
            name, value = line.strip().split(",")
            energy[name] = float(value)
    seconds["read"], cpu["read"] = time.perf_counter() - t, time.process_time() - c

    t, c = time.perf_counter(), time.process_time()
    ids, pdds, amds = [], [], []
    for name, cell, ops, frac in blocks:
        rows, w = pdd(cell, ops, frac, k)
        ids.append(name)
        pdds.append((rows, w))
        amds.append(w @ rows)
    amds = np.array(amds)
    seconds["invariants"], cpu["invariants"] = time.perf_counter() - t, time.process_time() - c

    t, c = time.perf_counter(), time.process_time()
    order = sorted(range(len(ids)), key=lambda i: (energy[ids[i]], i))
    kept, kept_of, emds = [], {}, 0
    for i in order:
        if kept:
            bounds = np.abs(amds[kept] - amds[i]).max(axis=1)
            best, best_j = np.inf, -1
            for b, j in sorted(zip(bounds, kept)):
                if b > min(tol, best):
                    break
                d = ot.emd2(pdds[i][1], pdds[j][1], ot.dist(pdds[i][0], pdds[j][0], metric="chebyshev"))
                emds += 1
                if d < best:
                    best, best_j = d, j
            if best <= tol:
                kept_of[ids[i]] = ids[best_j]
                continue
        kept.append(i)
        kept_of[ids[i]] = ids[i]
    seconds["duplicates"], cpu["duplicates"] = time.perf_counter() - t, time.process_time() - c

    with open(out, "w") as f:
        json.dump({"seconds": seconds, "cpuSeconds": cpu, "kept": len(kept), "emds": emds, "keptOf": kept_of}, f)


if __name__ == "__main__":
    main()
