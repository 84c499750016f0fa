#!/usr/bin/env python3
"""Cell volume, atoms per cell and covalent bond lengths of every block of CIF files, read with gemmi (Debian package
python3-gemmi): the CIF parser, the symmetry expansion (scripts/gemmi_unit_cell.py) and the cell's orthogonalisation
are gemmi's. For test/locate-experimental.test.ts, which checks that the experimental-like
variants of src/bench/_experimental-variants.ts keep molecules rigid while the cell grows, and shorten exactly the
bonds to hydrogen; and for test/sift-energy-basis.test.ts, which needs each structure's atoms per cell.

Usage: /usr/bin/python3 scripts/bond-lengths-gemmi.py FILE... > out.json
Prints {block name: {"volume": V, "sites": atoms per cell, "heavy": [...], "hydrogen": [...]}}: sorted lengths (Å) of the bonds between
non-hydrogen atoms and of the bonds from a hydrogen to a non-hydrogen atom, each bond once. A bond is a pair of
atoms closer than 1.6 Å (every covalent bond of the test molecule; no contact between molecules is that short).
"""
import json
import sys

import gemmi
import numpy as np

from gemmi_unit_cell import unit_cell_sites

BOND_ANGSTROM = 1.6


def bonds(frac, hydrogen, orth):
    heavy, with_h = [], []
    shifts = np.array([[a, b, c] for a in (-1, 0, 1) for b in (-1, 0, 1) for c in (-1, 0, 1)])
    for i in range(len(frac)):
        for j in range(i + 1, len(frac)):
            d = frac[j] - frac[i]
            d = d - np.round(d)
            lengths = np.linalg.norm((d + shifts) @ orth.T, axis=1)
            for length in lengths[lengths < BOND_ANGSTROM]:
                if hydrogen[i] and hydrogen[j]:
                    continue
                (with_h if hydrogen[i] or hydrogen[j] else heavy).append(float(length))
    return sorted(heavy), sorted(with_h)


def main():
    out = {}
    for path in sys.argv[1:]:
        for block in gemmi.cif.read(path):
            st = gemmi.make_small_structure_from_block(block)
            frac, elements, _mass = unit_cell_sites(block, st)
            hydrogen = np.array([e in ('H', 'D') for e in elements])
            heavy, with_h = bonds(np.array(frac), hydrogen, np.array(st.cell.orthogonalization_matrix))
            out[block.name] = {'volume': st.cell.volume, 'sites': len(frac), 'heavy': heavy, 'hydrogen': with_h}
    json.dump(out, sys.stdout)


if __name__ == '__main__':
    main()
