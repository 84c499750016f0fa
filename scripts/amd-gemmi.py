#!/usr/bin/env python3
"""Reference AMD and density of every block of a CIF, computed independently of polysift, for checking the
landscape generator: Debian's gemmi (/usr/bin/python3) expands the symmetry, numpy computes the distances.
AMD as defined in "Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022.
Usage: python3 scripts/amd-gemmi.py FILE.cif K  -> one JSON line per block {id, density, atoms, amd}"""
import json, os, subprocess, sys
import numpy as np

path, k = sys.argv[1], int(sys.argv[2])
# Debian's python runs gemmi (scripts/gemmi_unit_cell.py expands the symmetry); this one does the distances.
expand = os.path.join(os.path.dirname(os.path.abspath(__file__)), 'gemmi_unit_cell.py')
out = subprocess.run(['/usr/bin/python3', expand, path], check=True, capture_output=True, text=True).stdout
for line in out.splitlines():
    b = json.loads(line)
    m = np.array(b['orth'])  # columns are the cell vectors a, b, c
    cart = (np.array(b['frac']) % 1.0) @ m.T
    r = 2
    grid = np.array([[i, j, l] for i in range(-r, r + 1) for j in range(-r, r + 1) for l in range(-r, r + 1)])
    cloud = (cart[None, :, :] + (grid @ m.T)[:, None, :]).reshape(-1, 3)
    d = np.sqrt(((cart[:, None, :] - cloud[None, :, :]) ** 2).sum(-1))
    d.sort(axis=1)
    amd = d[:, 1:k + 1].mean(axis=0)
    print(json.dumps({"id": b['id'], "density": b['mass'] / (b['volume'] * 0.602214076), "atoms": len(b['frac']), "amd": amd.tolist()}))
