#!/usr/bin/env python3
"""Every atom in the unit cell of every block of a CIF, as gemmi (Debian package python3-gemmi) reads it: listed
symmetry operations win (gemmi.Op), otherwise those of the space-group symbol, otherwise P1; images that land on one
point (special positions) are merged. Shared by scripts/amd-gemmi.py and scripts/bond-lengths-gemmi.py.

Usage: /usr/bin/python3 scripts/gemmi_unit_cell.py FILE.cif  -> one JSON line per block
{id, frac, elements, mass, volume, orth} (orth: gemmi's orthogonalisation matrix, columns the cell vectors).
"""
import json
import sys

import gemmi


def unit_cell_sites(block, st):
    """Fractional positions (wrapped to [0, 1)), element symbols and total mass of every atom in the cell."""
    listed = [gemmi.cif.as_string(v) for v in block.find_values('_space_group_symop_operation_xyz')]
    if listed:
        ops = [gemmi.Op(t) for t in listed]
    else:
        sg = st.find_spacegroup()
        ops = list(sg.operations()) if sg else [gemmi.Op('x,y,z')]
    frac, elements, mass = [], [], 0.0
    for site in st.sites:
        images = []
        for op in ops:
            x = [v % 1.0 for v in op.apply_to_xyz([site.fract.x, site.fract.y, site.fract.z])]
            # Merge images that land on the same point (special positions).
            if not any(max(min(abs(a - b), 1 - abs(a - b)) for a, b in zip(x, y)) < 1e-4 for y in images):
                images.append(x)
        frac += images
        elements += [site.element.name] * len(images)
        mass += site.element.weight * len(images)
    return frac, elements, mass


def main():
    for block in gemmi.cif.read_file(sys.argv[1]):
        st = gemmi.make_small_structure_from_block(block)
        frac, elements, mass = unit_cell_sites(block, st)
        print(json.dumps({'id': block.name, 'frac': frac, 'elements': elements, 'mass': mass, 'volume': st.cell.volume,
                          'orth': [list(row) for row in st.cell.orthogonalization_matrix.tolist()]}))


if __name__ == '__main__':
    main()
