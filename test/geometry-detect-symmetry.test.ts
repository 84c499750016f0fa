// Symmetry detection (src/geometry/detect-symmetry.ts) against spglib (Debian's python3-spglib, run live through
// scripts/symmetry-spglib.py) at the same tolerance on both sides: our tolerance and spglib's `symprec` are the
// same quantity, the largest Cartesian distance in Å between an atom's image under an operation and the atom of
// the same element it lands on.
import { readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { CrystalRecord } from '../src/types.js';
import { readStructures, readCifText } from '../src/io/read.js';
import { expandSites } from '../src/geometry/periodic-set.js';
import { selectOrderedSites } from '../src/geometry/disorder.js';
import { detectSymmetry, DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM, type SymmetryCell } from '../src/geometry/detect-symmetry.js';
import { latticeRotations } from '../src/geometry/lattice-symmetry.js';
import { integerKernel, latticeBasis } from '../src/geometry/integer-lattice.js';
import { solveModOne } from '../src/geometry/congruence.js';
import { cellToBasis } from '../src/geometry/cell.js';
import { inverse } from '../src/geometry/reduce.js';
import { pointGroupSymbol } from '../src/geometry/point-group.js';
import { generateLandscape, ALL_GROUPS } from '../src/demo/landscape.js';
import { subgroupPacking } from '../src/demo/subgroup-packing.js';
import { expandToP1 } from '../src/demo/rewrite.js';
import { orvazinone } from '../src/demo/molecule.js';
import { makeRng, type Rng } from '../src/demo/prng.js';
import { IT_NUMBER, type GeneratedGroup } from '../src/demo/space-groups.js';
import { INDEX_TWO_SUBGROUP, cellOf } from '../src/bench/symmetry-tolerance.js';
import { expectSameAsSpglib, expectStandardised, spglibDatasets } from './helpers/spglib.js';

const TOL = DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM;
const REAL = new URL('./data/real/', import.meta.url).pathname;

/** Atoms of a record as sift uses them: the ordered sites, expanded by the file's operations. */
function cellOfRecord(r: CrystalRecord): SymmetryCell {
  const ex = expandSites(r, selectOrderedSites(r.sites).kept);
  return { basis: ex.basis, frac: ex.frac, types: ex.atomicNumbers };
}

/** The same atoms in another order, each moved by a random vector of length between `leastAngstrom` and `noiseAngstrom`. */
function shuffledWithNoise(c: SymmetryCell, rng: Rng, noiseAngstrom: number, leastAngstrom = 0): SymmetryCell {
  const m = c.types.length;
  const order = rng.shuffle(Array.from({ length: m }, (_, i) => i));
  const inv = inverse(c.basis, 3);
  const frac = new Float64Array(3 * m);
  const types = new Int32Array(m);
  order.forEach((i, k) => {
    const dir = [rng.normal(1), rng.normal(1), rng.normal(1)];
    const len = Math.hypot(dir[0], dir[1], dir[2]);
    const step = (leastAngstrom + rng.next() * (noiseAngstrom - leastAngstrom)) / len;
    const f = [c.frac[3 * i], c.frac[3 * i + 1], c.frac[3 * i + 2]];
    for (let r = 0; r < 3; r++) {
      // Cartesian step -> fractional: d_frac = d_cart B^-1.
      let df = 0;
      for (let s = 0; s < 3; s++) df += dir[s] * step * inv[3 * s + r];
      frac[3 * k + r] = f[r] + df;
    }
    types[k] = c.types[i];
  });
  return { basis: c.basis, frac, types };
}

describe('integer helpers of the search', () => {
  it('finds the integer kernel of a rotation minus the identity (its axis) and of the perpendicular-plane sum', () => {
    // 2-fold about b in a monoclinic basis: axis (0,1,0), perpendicular plane spanned by a and c.
    expect(integerKernel([-2, 0, 0, 0, 0, 0, 0, 0, -2])).toEqual([[0, 1, 0]]);
    const plane = integerKernel([0, 0, 0, 0, 2, 0, 0, 0, 0]);
    expect(plane.length).toBe(2);
    for (const v of plane) expect(v[1]).toBe(0);
  });
  it('builds the primitive lattice from a body-centring translation (index 2)', () => {
    const h = latticeBasis([[2, 0, 0], [0, 2, 0], [0, 0, 2], [1, 1, 1]]);
    const d = h[0][0] * (h[1][1] * h[2][2] - h[1][2] * h[2][1]) - h[0][1] * (h[1][0] * h[2][2] - h[1][2] * h[2][0]) + h[0][2] * (h[1][0] * h[2][1] - h[1][1] * h[2][0]);
    expect(Math.abs(d)).toBe(4);
  });
  it('solves an origin-shift congruence and refuses an inconsistent one', () => {
    // (I - W) p = b mod 1 for W = -I (an inversion): 2 p = b.
    const p = solveModOne([[2, 0, 0], [0, 2, 0], [0, 0, 2]], [0.5, 0.25, 0], 0.01)!;
    expect(p.map((v) => 2 * v)).toEqual([0.5, 0.25, 0]);
    // W = 2-fold about z: rows for z vanish, so b_z must be a whole number.
    expect(solveModOne([[2, 0, 0], [0, 2, 0], [0, 0, 0]], [0, 0, 0.5], 0.01)).toBeNull();
  });
});

describe('lattice rotations of reduced cells', () => {
  // Orders of the seven lattice point groups (holohedries): International Tables Vol. A, Table 3.1.2.1 (common practice).
  const cases: [string, number[], number][] = [
    ['triclinic', [5.1, 6.3, 7.7, 81, 97, 103], 2],
    ['monoclinic', [5.1, 6.3, 7.7, 90, 104, 90], 4],
    ['orthorhombic', [5.1, 6.3, 7.7, 90, 90, 90], 8],
    ['tetragonal', [6.3, 6.3, 7.7, 90, 90, 90], 16],
    ['hexagonal', [6.3, 6.3, 7.7, 90, 90, 120], 24],
    ['rhombohedral', [6.3, 6.3, 6.3, 75, 75, 75], 12],
    ['cubic', [6.3, 6.3, 6.3, 90, 90, 90], 48],
    ['cubic F as its primitive rhombohedron', [4.5, 4.5, 4.5, 60, 60, 60], 48],
  ];
  for (const [name, p, order] of cases) {
    it(`${name}: ${order} rotations`, () => {
      const basis = cellToBasis({ a: p[0], b: p[1], c: p[2], alpha: p[3], beta: p[4], gamma: p[5] });
      expect(latticeRotations(basis, 0.01).length).toBe(order);
    });
  }
});

describe('point-group symbols of space-group symbols', () => {
  it('drops screw subscripts, the lattice letter and placeholder 1s; glides become m (International Tables Vol. A)', () => {
    expect(['P 1 21/c 1', 'P b c a', 'P n a 21', 'F d -3 m', 'P -4 21 c', 'P 63/m m c', 'R -3 c', 'P 1', 'P -1', 'I 41/a m d'].map(pointGroupSymbol)).toEqual(
      ['2/m', 'mmm', 'mm2', 'm-3m', '-42m', '6/mmm', '-3m', '1', '-1', '4/mmm'],
    );
  });
});

describe('real CIFs expanded to P1 and shuffled, with noise, equal spglib (live)', async () => {
  const files = readdirSync(REAL).filter((f) => f.endsWith('.cif')).map((f) => REAL + f);
  const records: CrystalRecord[] = [];
  for await (const b of readStructures(files)) if (b.kind === 'record') records.push(b.record);
  const rng = makeRng(1101);
  const cases: { label: string; cell: SymmetryCell }[] = [];
  for (const r of records) {
    const cell = cellOfRecord(r);
    cases.push({ label: `${r.source} as read`, cell });
    for (const noise of [0.001, 0.003, 0.01]) cases.push({ label: `${r.source} in P1, shuffled, noise ${noise} Å`, cell: shuffledWithNoise(cell, rng, noise) });
  }
  const ref = spglibDatasets(cases.map((c) => c.cell), TOL).results;

  it('covers every structure the reader accepts in the real files, in many space groups', () => {
    expect(records.length).toBeGreaterThanOrEqual(45);
    expect(new Set(ref.map((r) => r.number)).size).toBeGreaterThanOrEqual(20);
  });
  it('gives spglib\'s group, setting, operations, orbits and cells for every one', () => {
    cases.forEach((c, i) => expectSameAsSpglib(c.label, c.cell, detectSymmetry(c.cell, TOL), ref[i], TOL));
  });
});

const GROUPS: GeneratedGroup[] = [...ALL_GROUPS, 'Pna21'];

describe('generated packings of the invented molecule written as a search writes them equal spglib (live)', () => {
  // Two packings per group, each written six ways: standard, symbol only, another cell, another setting, P1, P1 supercell.
  const g = generateLandscape({ seed: 31, packings: 14, copiesPerPacking: 6, closePairs: 0, spaceGroups: GROUPS, noiseAngstrom: 0.002, squeezeMoves: 150 });
  const cells = readCifText(g.cif, 'generated.cif').map((b) => {
    if (b.kind !== 'record') throw new Error(b.rejected.reason);
    const ex = expandSites(b.record, b.record.sites.map((_, i) => i));
    return { basis: ex.basis, frac: ex.frac, types: ex.atomicNumbers } as SymmetryCell;
  });
  const ref = spglibDatasets(cells, TOL).results;

  it('includes P1 copies and supercells of every group', () => {
    for (const group of GROUPS) {
      const kinds = new Set(g.kinds.filter((_, i) => g.packings[g.truth[i]].group === group));
      expect([...kinds].sort()).toEqual(['other-cell', 'other-setting', 'p1', 'p1-supercell', 'standard', 'symbol-only']);
    }
  });
  it('finds the group each copy was generated in, as spglib does', () => {
    cells.forEach((cell, i) => {
      const label = `${g.ids[i]} (${g.kinds[i]} of a ${g.packings[g.truth[i]].group} packing)`;
      const d = detectSymmetry(cell, TOL);
      expectSameAsSpglib(label, cell, d, ref[i], TOL);
      expect(d.ok && d.symmetry.number, label).toBe(IT_NUMBER[g.packings[g.truth[i]].group]);
      // Z' = 1 copies: one molecule (11 atoms) per operation in the given cell.
      expect(d.ok && d.symmetry.operations.length * 11, label).toBe(cell.types.length);
    });
  });
});

describe('noise above the tolerance: both sides report the lower group (live)', () => {
  const mol = orvazinone();
  const g = generateLandscape({ seed: 32, packings: 14, copiesPerPacking: 1, closePairs: 0, spaceGroups: GROUPS, squeezeMoves: 150 });
  const rng = makeRng(3202);
  // Every atom moved by 0.15-0.25 Å: no operation but the identity survives.
  const shaken = g.packings.map((gp) =>
    shuffledWithNoise(cellOf(expandToP1(subgroupPacking(gp.packing, [0], 0, rng, mol.elements.length, mol.elements))), rng, 0.25, 0.15),
  );
  // Molecules outside an index-2 subgroup turned by 4° (at least 0.16 Å from the higher group): the subgroup is found.
  const turned = g.packings.map((gp) => cellOf(expandToP1(subgroupPacking(gp.packing, INDEX_TWO_SUBGROUP[gp.group], 4, rng, mol.elements.length, mol.elements))));
  const refShaken = spglibDatasets(shaken, TOL).results;
  const refTurned = spglibDatasets(turned, TOL).results;
  // The index-2 subgroups kept (International Tables Vol. A, maximal subgroups): P21/c -> P-1, P-1 -> P1,
  // P212121 -> P21, C2/c -> P-1 (C-1), P21 -> P1, Pbca -> P21/c (P21/b 1 1 setting), Pna21 -> P21.
  const lower: Record<GeneratedGroup, number> = { 'P21/c': 2, 'P-1': 1, P212121: 4, 'C2/c': 2, P21: 1, Pbca: 14, Pna21: 4 };

  it('random displacements of 0.15-0.25 Å leave P1 on both sides', () => {
    shaken.forEach((cell, i) => {
      const d = detectSymmetry(cell, TOL);
      expectSameAsSpglib(`${g.packings[i].group} shaken`, cell, d, refShaken[i], TOL);
      expect(d.ok && d.symmetry.number).toBe(1);
    });
  });
  it('a 4° turn of half the molecules leaves the index-2 subgroup on both sides', () => {
    turned.forEach((cell, i) => {
      const gp = g.packings[i];
      const d = detectSymmetry(cell, TOL);
      expectSameAsSpglib(`${gp.group} turned`, cell, d, refTurned[i], TOL);
      expect(d.ok && d.symmetry.number).toBe(lower[gp.group]);
    });
  });
  it('a tolerance too tight for the noise gives a lower group than the generated one', () => {
    const p21c = g.packings.find((gp) => gp.group === 'P21/c')!;
    const noisy = shuffledWithNoise(cellOf(expandToP1(subgroupPacking(p21c.packing, [0, 1, 2, 3], 0, rng, 11, mol.elements))), rng, 0.01, 0.005);
    const tight = detectSymmetry(noisy, 0.002);
    expect(tight.ok && tight.symmetry.number).toBe(1);
    const ref = spglibDatasets([noisy], 0.002).results[0];
    expect(ref.number).toBe(1);
  });
});

describe('the change of basis to the standard setting', () => {
  it('takes the operations of a P21/n copy in another cell and origin to those of P 1 21/c 1', () => {
    const g = generateLandscape({ seed: 33, packings: 1, copiesPerPacking: 6, closePairs: 0, spaceGroups: ['P21/c'], squeezeMoves: 150 });
    readCifText(g.cif, 'generated.cif').forEach((b, i) => {
      if (b.kind !== 'record') throw new Error(b.rejected.reason);
      const ex = expandSites(b.record, b.record.sites.map((_, s) => s));
      const d = detectSymmetry({ basis: ex.basis, frac: ex.frac, types: ex.atomicNumbers });
      expect(d.ok).toBe(true);
      if (d.ok) expectStandardised(g.kinds[i], d.symmetry, TOL);
    });
  });
});
