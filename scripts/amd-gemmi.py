#!/usr/bin/env python3
"""Reference AMD and density of every block of a CIF, computed independently of polysift, for checking the
landscape generator: Debian's gemmi (/usr/bin/python3) expands the symmetry, numpy computes the distances.
AMD as defined in "Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022.
Usage: python3 scripts/amd-gemmi.py FILE.cif K  -> one JSON line per block {id, density, atoms, amd}"""
import json, subprocess, sys
import numpy as np

EXPAND = r'''
import json, sys, gemmi
for block in gemmi.cif.read_file(sys.argv[1]):
    st = gemmi.make_small_structure_from_block(block)
    # Listed operations win; otherwise the operations of the space-group symbol; otherwise P1.
    listed = [gemmi.cif.as_string(v) for v in block.find_values('_space_group_symop_operation_xyz')]
    if listed:
        ops = [gemmi.Op(t) for t in listed]
    else:
        sg = st.find_spacegroup()
        ops = list(sg.operations()) if sg else [gemmi.Op('x,y,z')]
    frac, mass = [], 0.0
    for site in st.sites:
        images = []
        for op in ops:
            x = [v % 1.0 for v in op.apply_to_xyz([site.fract.x, site.fract.y, site.fract.z])]
            # Merge images that land on the same point (special positions).
            if not any(max(min(abs(a - b), 1 - abs(a - b)) for a, b in zip(x, y)) < 1e-4 for y in images):
                images.append(x)
        frac += images
        mass += site.element.weight * len(images)
    print(json.dumps({"id": block.name, "frac": frac, "mass": mass, "volume": st.cell.volume,
        "orth": st.cell.orthogonalization_matrix.tolist()}))
'''

path, k = sys.argv[1], int(sys.argv[2])
out = subprocess.run(['/usr/bin/python3', '-c', EXPAND, path], check=True, capture_output=True, text=True).stdout
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
