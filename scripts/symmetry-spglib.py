#!/usr/bin/env python3
"""Reference symmetry detection with spglib (Debian's python3-spglib, run as /usr/bin/python3), for
test/geometry-detect-symmetry.test.ts and the symmetry benchmark.

Reads one JSON object on stdin:
  {"symprec": 0.05, "defaults": {"14": "-P 2ybc", ...}, "cells": [{"lattice": [[ax, ay, az], ...],
   "positions": [[x, y, z], ...], "numbers": [6, 1, ...]}, ...]}
`symprec` is spglib's tolerance, a Cartesian distance in Å. `defaults` names, per group number, the Hall
symbol of the setting the caller reports; when spglib's own choice of setting differs (groups with two origin
choices), the dataset is computed again in that setting (spglib's hall_number argument) so the change of basis
refers to the same setting.

Prints one JSON object: {"seconds": CPU seconds spent in spglib, "results": [dataset or {"error": ...}, ...]}.
"""
import json
import sys
import time

import numpy as np
import spglib


def hall_numbers_of(defaults):
    """Map group number -> spglib hall number whose Hall symbol is the one given."""
    wanted = {int(k): ' '.join(v.split()) for k, v in defaults.items()}
    out = {}
    for h in range(1, 531):
        t = spglib.get_spacegroup_type(h)
        n = t['number']
        if n in wanted and ' '.join(t['hall_symbol'].split()) == wanted[n] and n not in out:
            out[n] = h
    return out


def main():
    job = json.load(sys.stdin)
    symprec = float(job['symprec'])
    halls = hall_numbers_of(job.get('defaults', {}))
    results = []
    spent = 0.0
    for c in job['cells']:
        cell = (np.array(c['lattice'], dtype=float), np.array(c['positions'], dtype=float), np.array(c['numbers'], dtype=int))
        t0 = time.process_time()
        ds = spglib.get_symmetry_dataset(cell, symprec=symprec)
        if ds is not None and halls.get(ds['number'], ds['hall_number']) != ds['hall_number']:
            ds = spglib.get_symmetry_dataset(cell, symprec=symprec, hall_number=halls[ds['number']])
        spent += time.process_time() - t0
        if ds is None:
            results.append({'error': spglib.get_error_message()})
            continue
        results.append({
            'number': int(ds['number']),
            'international': ds['international'],
            'hall': ds['hall'],
            'hall_number': int(ds['hall_number']),
            'rotations': ds['rotations'].tolist(),
            'translations': ds['translations'].tolist(),
            'equivalent_atoms': ds['equivalent_atoms'].tolist(),
            'std_lattice': ds['std_lattice'].tolist(),
            'primitive_lattice': ds['primitive_lattice'].tolist(),
            'transformation_matrix': ds['transformation_matrix'].tolist(),
            'origin_shift': ds['origin_shift'].tolist(),
        })
    print(json.dumps({'seconds': spent, 'results': results}))


if __name__ == '__main__':
    main()
