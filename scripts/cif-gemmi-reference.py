#!/usr/bin/env python3
"""Reference reading of CIF files with gemmi's CIF parser (Debian package python3-gemmi), for
test/cif-real.test.ts: per block the name, cell, stated volume and density, listed symmetry operations and
atom-site rows.

Usage: /usr/bin/python3 scripts/cif-gemmi-reference.py FILE... > out.json
Prints one JSON object: {file: [block, ...]} where a file gemmi cannot parse maps to {"error": message}.
"""
import json
import sys

import gemmi

CELL = ['_cell_length_a', '_cell_length_b', '_cell_length_c', '_cell_angle_alpha', '_cell_angle_beta', '_cell_angle_gamma']
OPS = ['_space_group_symop_operation_xyz', '_symmetry_equiv_pos_as_xyz']


def number(v):
    if v is None or v in ('?', '.'):
        return None
    x = gemmi.cif.as_number(v)
    return None if x != x else x  # NaN -> None


def read_block(b):
    out = {
        'name': b.name,
        'cell': [number(b.find_value(n)) for n in CELL],
        'volume': number(b.find_value('_cell_volume')),
        'density': number(b.find_value('_exptl_crystal_density_diffrn')),
        'ops': None,
        'sites': None,
    }
    for name in OPS:
        col = b.find_values(name)
        if len(col) > 0:
            out['ops'] = [gemmi.cif.as_string(v) for v in col]
            break
    table = b.find('_atom_site_', ['label', 'fract_x', 'fract_y', 'fract_z', '?occupancy', '?calc_flag'])
    if len(table) > 0:
        sites = []
        for row in table:
            occ = row[4] if row.has(4) else None
            flag = row[5] if row.has(5) else None
            sites.append({
                'label': gemmi.cif.as_string(row[0]),
                'frac': [number(row[1]), number(row[2]), number(row[3])],
                'occupancy': number(occ) if occ is not None else None,
                'dummy': flag is not None and flag.lower() == 'dum',
            })
        out['sites'] = sites
    return out


def main():
    result = {}
    for path in sys.argv[1:]:
        try:
            doc = gemmi.cif.read_file(path)
            result[path] = [read_block(b) for b in doc]
        except Exception as e:  # gemmi raises on syntax errors; the test checks our reader rejects those too
            result[path] = {'error': str(e)}
    json.dump(result, sys.stdout)


if __name__ == '__main__':
    main()
