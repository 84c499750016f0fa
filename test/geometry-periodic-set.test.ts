import { describe, expect, it } from 'vitest';
import { crystalFacts } from '../src/geometry/facts.js';
import { elementFromSite } from '../src/geometry/elements.js';
import { opsFromHall } from '../src/geometry/hall.js';
import { hillFormula } from '../src/geometry/molecules.js';
import { expandSites, toPeriodicSet } from '../src/geometry/periodic-set.js';
import { applyOp, opsFromSymbol } from '../src/geometry/symmetry.js';
import { cellToBasis } from '../src/geometry/cell.js';
import type { CellParams } from '../src/types.js';
import { cubic, makeRecord, type SiteSpec } from './geometry-records.js';

// Lattice constants: CRC Handbook of Chemistry and Physics, crystal structure / lattice constant tables
// (values from memory, as the project brief quotes them). The X-ray densities follow from the cell and
// the IUPAC 2021 abridged atomic weights: rho = n * M / (N_A * a^3).
// Space groups from their Hall symbols (Hall, Acta Cryst. A 1981): Fm-3m '-F 4 2 3', Fd-3m origin
// choice 1 'F 4d 2 3 -1d' (both as gemmi's table gives them; our Hall parser is checked against gemmi).
describe('handbook X-ray densities', () => {
  const rockSalt = makeRecord('rocksalt', cubic(5.6402), opsFromHall('-F 4 2 3'), [
    { label: 'Na1', element: 'Na', frac: [0, 0, 0] },
    { label: 'Cl1', element: 'Cl', frac: [0.5, 0.5, 0.5] },
  ]);
  const silicon = makeRecord('silicon', cubic(5.431), opsFromHall('F 4d 2 3 -1d'), [{ label: 'Si1', element: 'Si', frac: [0, 0, 0] }]);
  const diamond = makeRecord('diamond', cubic(3.5668), opsFromHall('F 4d 2 3 -1d'), [{ label: 'C1', element: 'C', frac: [0, 0, 0] }]);
  const copper = makeRecord('copper', cubic(3.6149), opsFromHall('-F 4 2 3'), [{ label: 'Cu1', element: 'Cu', frac: [0, 0, 0] }]);
  const cases: [string, typeof rockSalt, number, number, number, string][] = [
    ['rock salt NaCl, a = 5.6402 Å', rockSalt, 2.163, 8, 4, 'ClNa'],
    ['silicon, a = 5.4310 Å', silicon, 2.329, 8, 8, 'Si'],
    ['diamond, a = 3.5668 Å', diamond, 3.516, 8, 8, 'C'],
    ['copper (fcc), a = 3.6149 Å', copper, 8.935, 4, 4, 'Cu'],
  ];
  for (const [name, record, density, atoms, z, formula] of cases) {
    it(`${name}: ${density} g/cm³, ${atoms} atoms per cell, Z = ${z}`, () => {
      const f = crystalFacts(record);
      expect(f.densityGPerCm3).toBeCloseTo(density, 3);
      expect(f.atomsPerCell).toBe(atoms);
      expect(f.z).toBe(z);
      expect(f.formulas).toEqual([formula]);
      expect(f.notes.join(' ')).toMatch(/formula units/);
      expect(f.zPrime).toBeCloseTo(z / 192, 12);
    });
  }
  it('builds rock salt the same from the four centring translations in P1 form', () => {
    const centred = makeRecord('rocksalt-p1', cubic(5.6402), ['x,y,z', 'x,y+1/2,z+1/2', 'x+1/2,y,z+1/2', 'x+1/2,y+1/2,z'], [
      { label: 'Na1', element: 'Na', frac: [0, 0, 0] },
      { label: 'Cl1', element: 'Cl', frac: [0.5, 0.5, 0.5] },
    ]);
    const f = crystalFacts(centred);
    expect(f.densityGPerCm3).toBeCloseTo(2.163, 3);
    expect(f.atomsPerCell).toBe(8);
    expect(f.z).toBe(4);
    expect(f.zPrime).toBe(1);
    const { set } = toPeriodicSet(centred, { hydrogens: 'keep' });
    expect(Array.from(set.multiplicity)).toEqual([4, 4]);
    expect(Array.from(set.atomicNumbers).sort()).toEqual([11, 11, 11, 11, 17, 17, 17, 17]);
  });
});

describe('special positions and duplicate sites merge', () => {
  const cell: CellParams = { a: 6.1, b: 7.3, c: 8.2, alpha: 84, beta: 79, gamma: 72 };
  it('an atom on an inversion centre in P-1 has multiplicity 1, a general one 2', () => {
    const r = makeRecord('pbar1', cell, opsFromSymbol('P-1')!, [
      { label: 'Fe1', element: 'Fe', frac: [0.5, 0, 0.5] },
      { label: 'O1', element: 'O', frac: [0.61, 0.12, 0.33] },
    ]);
    const { set, notes } = toPeriodicSet(r, { hydrogens: 'keep' });
    expect(Array.from(set.multiplicity)).toEqual([1, 2]);
    expect(set.motif.length).toBe(9);
    expect(Array.from(set.asym)).toEqual([0, 1]);
    expect(notes.join(' ')).toMatch(/1 site\(s\) on special positions/);
  });
  it('rounded coordinates still merge (0.3333 for 1/3 on a three-fold axis, 4-decimal rounding at an inversion centre)', () => {
    const hex: CellParams = { a: 15.2, b: 15.2, c: 7.1, alpha: 90, beta: 90, gamma: 120 };
    const r = makeRecord('p3', hex, opsFromHall('P 3'), [
      { label: 'N1', element: 'N', frac: [0.3333, 0.6667, 0.25] },
      { label: 'C1', element: 'C', frac: [0.1, 0.2, 0.3] },
    ]);
    expect(Array.from(toPeriodicSet(r, { hydrogens: 'keep' }).set.multiplicity)).toEqual([1, 3]);
    const r2 = makeRecord('pbar1-rounded', cell, opsFromSymbol('P-1')!, [{ label: 'Fe1', element: 'Fe', frac: [0.50004, 0.99996, 0.00003] }]);
    expect(Array.from(toPeriodicSet(r2, { hydrogens: 'keep' }).set.multiplicity)).toEqual([1]);
  });
  it('keeps atoms 0.2 Å apart as two atoms (tolerance 0.1 Å)', () => {
    // x and -x differ by 2x; with a = 6.1 Å, x = 0.02/6.1*... choose 2*x*a = 0.2 Å along a only (orthogonal cell).
    const ortho: CellParams = { a: 10, b: 10, c: 10, alpha: 90, beta: 90, gamma: 90 };
    const r = makeRecord('near', ortho, opsFromSymbol('P-1')!, [{ label: 'O1', element: 'O', frac: [0.01, 0, 0] }]);
    expect(Array.from(toPeriodicSet(r, { hydrogens: 'keep' }).set.multiplicity)).toEqual([2]);
    const r2 = makeRecord('near2', ortho, opsFromSymbol('P-1')!, [{ label: 'O1', element: 'O', frac: [0.004, 0, 0] }]);
    expect(Array.from(toPeriodicSet(r2, { hydrogens: 'keep' }).set.multiplicity)).toEqual([1]);
  });
  it('merges a site listed twice as a symmetry copy and says so', () => {
    const ops = opsFromSymbol('P21/c')!;
    const copy = applyOp(ops[1]!, [0.21, 0.33, 0.41]);
    const r = makeRecord('twice', { a: 8, b: 9, c: 10, alpha: 90, beta: 101, gamma: 90 }, ops, [
      { label: 'S1', element: 'S', frac: [0.21, 0.33, 0.41] },
      { label: 'S1a', element: 'S', frac: [copy[0] + 1, copy[1], copy[2] - 1] },
    ]);
    const { set, notes } = toPeriodicSet(r, { hydrogens: 'keep' });
    expect(set.motif.length / 3).toBe(4);
    expect(Array.from(set.multiplicity)).toEqual([4]);
    expect(notes.join(' ')).toMatch(/S1a is a symmetry copy of site S1/);
  });
  it('wraps every motif point into the cell', () => {
    const r = makeRecord('wrap', cell, ['x,y,z', '-x+2,-y-1,-z+1/2'], [{ label: 'C1', element: 'C', frac: [1.3, -0.2, 2.7] }]);
    const ex = expandSites(r, [0]);
    for (const v of ex.frac) {
      expect(v).toBeGreaterThanOrEqual(0);
      expect(v).toBeLessThan(1);
    }
    expect(ex.frac[0]).toBeCloseTo(0.3, 12);
    expect(ex.frac[1]).toBeCloseTo(0.8, 12);
    expect(ex.frac[2]).toBeCloseTo(0.7, 12);
  });
});

describe('disorder policy, hydrogens and refusals', () => {
  const cell = cubic(12);
  const sites: SiteSpec[] = [
    { label: 'C1', element: 'C', frac: [0.1, 0.1, 0.1] },
    { label: 'C2', element: 'C', frac: [0.2, 0.1, 0.1] },
    { label: 'O1A', element: 'O', frac: [0.3, 0.1, 0.1], occupancy: 0.7, group: '1', assembly: 'A' },
    { label: 'O2A', element: 'O', frac: [0.3, 0.2, 0.1], occupancy: 0.7, group: '1', assembly: 'A' },
    { label: 'S1B', element: 'S', frac: [0.31, 0.15, 0.12], occupancy: 0.3, group: '2', assembly: 'A' },
    { label: 'O3', element: 'O', frac: [0.6, 0.6, 0.6], occupancy: 0.5 },
    { label: 'H1', element: 'H', frac: [0.1, 0.18, 0.1] },
    { label: 'D1', element: (elementFromSite(null, 'D1') as { element: string }).element, frac: [0.1, 0.1, 0.19] },
  ];
  const r = makeRecord('disorder', cell, ['x,y,z'], sites, { opsOrigin: 'identity' });
  it('keeps the group with the largest occupancy sum per assembly and ungrouped partial sites, with notes', () => {
    const { set, notes } = toPeriodicSet(r, { hydrogens: 'keep' });
    // C1 C2 O1A O2A O3 H1 D1
    expect(Array.from(set.atomicNumbers)).toEqual([6, 6, 8, 8, 8, 1, 1]);
    const text = notes.join(' | ');
    expect(text).toMatch(/disorder assembly A: kept group 1 \(occupancy sum 1\.4/);
    expect(text).toMatch(/dropped group 2 \(1 sites, occupancy sum 0\.3\)/);
    expect(text).toMatch(/1 site\(s\) with occupancy below 1 and no disorder group kept/);
  });
  it('drops hydrogen and deuterium with --hydrogens drop and says how many', () => {
    const { set, notes } = toPeriodicSet(r, { hydrogens: 'drop' });
    expect(Array.from(set.atomicNumbers)).toEqual([6, 6, 8, 8, 8]);
    expect(notes.join(' ')).toMatch(/hydrogens dropped: 2 hydrogen site/);
  });
  it('weights density by occupancy over every listed site (IUPAC 2021 weights)', () => {
    const f = crystalFacts(r);
    // 2 C + 0.7*2 O + 0.3 S + 0.5 O + 2 H, over N_A * 12^3 Å^3.
    const mass = 2 * 12.011 + 1.4 * 15.999 + 0.3 * 32.06 + 0.5 * 15.999 + 2 * 1.008;
    expect(f.densityGPerCm3).toBeCloseTo(mass / (6.02214076e23 * 1728e-24), 10);
    expect(f.atomsPerCell).toBe(7);
    expect(f.zPrime).toBeNull();
  });
  it('refuses a structure with no atoms left, saying what to do', () => {
    const onlyH = makeRecord('onlyh', cell, ['x,y,z'], [{ label: 'H1', element: 'H', frac: [0, 0, 0] }]);
    expect(() => toPeriodicSet(onlyH, { hydrogens: 'drop' })).toThrow(/onlyh\.cif#onlyh.*--hydrogens keep/);
    const empty = makeRecord('empty', cell, ['x,y,z'], []);
    expect(() => toPeriodicSet(empty, { hydrogens: 'keep' })).toThrow(/no atom sites/);
    const nan = makeRecord('nan', cell, ['x,y,z'], [{ label: 'C1', element: 'C', frac: [Number.NaN, 0, 0] }]);
    expect(() => toPeriodicSet(nan, { hydrogens: 'keep' })).toThrow(/C1.*not numbers/);
  });
});

describe('Hill formulas', () => {
  // Hill order as the CIF core dictionary defines _chemical_formula_sum (Hill, J. Am. Chem. Soc. 1900).
  const f = (o: Record<number, number>) => hillFormula(new Map(Object.entries(o).map(([k, v]) => [Number(k), v])));
  it('puts C then H first, then the rest alphabetically', () => {
    expect(f({ 6: 6, 1: 6 })).toBe('C6H6');
    expect(f({ 8: 1, 1: 6, 6: 2 })).toBe('C2H6O');
    expect(f({ 35: 1, 17: 1, 1: 1, 6: 1 })).toBe('CHBrCl');
    expect(f({ 7: 2, 6: 12, 1: 10, 16: 1, 8: 2 })).toBe('C12H10N2O2S');
  });
  it('orders everything alphabetically without carbon', () => {
    expect(f({ 11: 1, 17: 1 })).toBe('ClNa');
    expect(f({ 1: 2, 8: 1 })).toBe('H2O');
    expect(f({ 1: 4, 7: 1, 17: 1 })).toBe('ClH4N');
  });
});

// An invented rigid molecule (C3H4NO, coordinates in Å around its own centre) placed in cells by hand.
const MOLECULE: [string, number, number, number][] = [
  ['C', 0, 0, 0], ['C', 1.5, 0, 0], ['C', -0.75, 1.3, 0], ['N', -0.7, -1.25, 0], ['O', 2.2, 1.0, 0.3],
  ['H', -0.2, 2.2, 0.1], ['H', -1.8, 1.3, 0.2], ['H', -1.7, -1.3, -0.1], ['H', 1.9, -0.9, 0.4],
];

/** Fractional coordinates of the molecule centred at fractional `centre` in `cell`. */
function placeMolecule(cell: CellParams, centre: [number, number, number]): SiteSpec[] {
  const b = cellToBasis(cell);
  // Cartesian -> fractional for a basis with a along x and b in the xy plane (lower triangular rows).
  const toFrac = (x: number, y: number, z: number): [number, number, number] => {
    const fz = z / b[8]!;
    const fy = (y - fz * b[7]!) / b[4]!;
    const fx = (x - fy * b[3]! - fz * b[6]!) / b[0]!;
    return [fx, fy, fz];
  };
  return MOLECULE.map(([el, x, y, z], i) => {
    const d = toFrac(x, y, z);
    return { label: `${el}${i + 1}`, element: el, frac: [centre[0] + d[0], centre[1] + d[1], centre[2] + d[2]] };
  });
}

describe('molecules, Z and Z\'', () => {
  const cell: CellParams = { a: 8.3, b: 9.6, c: 10.4, alpha: 90, beta: 103.5, gamma: 90 };
  it('finds Z = 4, Z\' = 1 for a molecule on a general position in P21/c', () => {
    const r = makeRecord('p21c', cell, opsFromSymbol('P21/c')!, placeMolecule(cell, [0.27, 0.31, 0.19]), { spaceGroup: 'P 21/c' });
    const f = crystalFacts(r);
    expect(f.atomsPerCell).toBe(36);
    expect(f.z).toBe(4);
    expect(f.zPrime).toBe(1);
    expect(f.formulas).toEqual(['C3H4NO']);
  });
  it('follows bonds across cell faces (the molecule straddles the a, b and c faces)', () => {
    // P21 (no inversion centre at the cell corner, the screw image sits b/2 away).
    const r = makeRecord('faces', cell, opsFromSymbol('P21')!, placeMolecule(cell, [0.01, 0.995, 0.02]));
    const ex = expandSites(r, r.sites.map((_, i) => i));
    // the molecule really is cut by the faces: some wrapped coordinates sit near 0, others near 1
    const xs = Array.from({ length: 9 }, (_, i) => ex.frac[3 * i]!);
    expect(Math.max(...xs) - Math.min(...xs)).toBeGreaterThan(0.5);
    const ys = Array.from({ length: 9 }, (_, i) => ex.frac[3 * i + 1]!);
    expect(Math.max(...ys) - Math.min(...ys)).toBeGreaterThan(0.5);
    const f = crystalFacts(r);
    expect(f.z).toBe(2);
    expect(f.zPrime).toBe(1);
    expect(f.formulas).toEqual(['C3H4NO']);
  });
  it('finds Z = 2, Z\' = 0.5 for a centrosymmetric molecule on an inversion centre in P21/c', () => {
    // Invented C2H2Cl2-like chain: half listed, the inversion centre at the origin makes the other half.
    const half: [string, number, number, number][] = [['C', 0.66, 0.1, 0.05], ['Cl', 1.5, 1.45, 0.3], ['H', 1.1, -0.85, 0.0]];
    const b = cellToBasis(cell);
    const sites: SiteSpec[] = half.map(([el, x, y, z], i) => {
      const fz = z / b[8]!, fy = (y - fz * b[7]!) / b[4]!, fx = (x - fy * b[3]! - fz * b[6]!) / b[0]!;
      return { label: `${el}${i + 1}`, element: el, frac: [fx, fy, fz] };
    });
    const f = crystalFacts(makeRecord('inv', cell, opsFromSymbol('P21/c')!, sites));
    expect(f.atomsPerCell).toBe(12);
    expect(f.z).toBe(2);
    expect(f.zPrime).toBe(0.5);
    expect(f.formulas).toEqual(['C2H2Cl2']);
  });
  it('notes a file whose formula has hydrogen but lists no hydrogen sites', () => {
    const noH = placeMolecule(cell, [0.27, 0.31, 0.19]).filter((s) => s.element !== 'H');
    const text = "data_noh\n_chemical_formula_sum 'C3 H4 N O'\n_cell_formula_units_Z 4\n_exptl_crystal_density_diffrn 1.0\n";
    const f = crystalFacts(makeRecord('noh', cell, opsFromSymbol('P21/c')!, noH, { text }));
    const notes = f.notes.join(' | ');
    expect(notes).toMatch(/has hydrogen but no hydrogen sites/);
    expect(notes).toMatch(/_exptl_crystal_density_diffrn says 1/);
  });
});

describe('bond graph across faces: rings, chains and overlaps', () => {
  it('keeps a six-ring cut by three cell faces as one finite molecule', () => {
    // Regular hexagon of C, radius 1.39 Å (the benzene C-C distance, common practice), centred on a cell corner.
    const cell = cubic(9);
    const sites: SiteSpec[] = Array.from({ length: 6 }, (_, k) => {
      const t = (k * Math.PI) / 3;
      return { label: `C${k + 1}`, element: 'C', frac: [(1.39 * Math.cos(t)) / 9, (1.39 * Math.sin(t)) / 9, 0.05 * ((k % 2) * 2 - 1) / 9] };
    });
    const f = crystalFacts(makeRecord('ring', cell, ['x,y,z'], sites));
    expect(f.z).toBe(1);
    expect(f.formulas).toEqual(['C6']);
    expect(f.notes.join(' ')).not.toMatch(/extend/);
  });
  it('recognises a chain that bonds to its own translate and counts formula units', () => {
    // C and O alternating along a = 3 Å: C-O 1.5 Å < 0.76 + 0.66 + 0.4 Å, so the chain is infinite.
    const cell: CellParams = { a: 3, b: 10, c: 10, alpha: 90, beta: 90, gamma: 90 };
    const f = crystalFacts(makeRecord('chain', cell, ['x,y,z'], [
      { label: 'C1', element: 'C', frac: [0, 0.5, 0.5] },
      { label: 'O1', element: 'O', frac: [0.5, 0.5, 0.5] },
    ]));
    expect(f.z).toBe(1);
    expect(f.formulas).toEqual(['CO']);
    expect(f.notes.join(' ')).toMatch(/bonds extend through the whole crystal/);
  });
  it('names atoms that overlap their symmetry images (disorder given full occupancy)', () => {
    // A site 0.2 Å from a two-fold axis along c: it and its image are 0.4 Å apart.
    const cell: CellParams = { a: 10, b: 10, c: 10, alpha: 90, beta: 90, gamma: 90 };
    const f = crystalFacts(makeRecord('overlap', cell, ['x,y,z', '-x,-y,z'], [{ label: 'N1', element: 'N', frac: [0.02, 0, 0.3] }]));
    expect(f.atomsPerCell).toBe(2);
    expect(f.notes.join(' ')).toMatch(/1 pair\(s\) of atoms closer than 0\.5 Å \(shortest 0\.400 Å, N1 and an image of itself\)/);
  });
  it('counts both alternatives of a disordered site that share a position in the density', () => {
    const cell = cubic(10);
    const r = makeRecord('alt', cell, ['x,y,z'], [
      { label: 'O1A', element: 'O', frac: [0.5, 0.5, 0.5], occupancy: 0.6, group: '1' },
      { label: 'O1B', element: 'O', frac: [0.502, 0.5, 0.5], occupancy: 0.4, group: '2' },
    ]);
    const f = crystalFacts(r);
    expect(f.densityGPerCm3).toBeCloseTo(15.999 / (6.02214076e23 * 1000e-24), 10);
    expect(f.atomsPerCell).toBe(1);
  });
  it('checks the sites against _chemical_formula_sum x _cell_formula_units_Z when no density is stated', () => {
    const cell = cubic(10);
    const text = "data_fz\n_chemical_formula_sum 'C2 O'\n_cell_formula_units_Z 1\n";
    const f = crystalFacts(makeRecord('fz', cell, ['x,y,z'], [{ label: 'C1', element: 'C', frac: [0.5, 0.5, 0.5] }], { text }));
    expect(f.notes.join(' ')).toMatch(/the sites give 0\.020 g\/cm³ but _chemical_formula_sum x _cell_formula_units_Z \(C2 O x 1\) gives 0\.066 g\/cm³/);
  });
});

describe('bond search with a cell list agrees with trying every pair and translation', () => {
  // Reference: brute force over all pairs and lattice translations -3..3 (exhaustive for these cells).
  function lcg(seed: number): () => number {
    let s = seed >>> 0;
    return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  }
  it('gives the same components and overlap count on random skewed cells', async () => {
    const { findMolecules, OVERLAP_ANGSTROM } = await import('../src/geometry/molecules.js');
    const { covalentRadiusAngstrom } = await import('../src/geometry/elements.js');
    const rand = lcg(7);
    for (let trial = 0; trial < 30; trial++) {
      const cell: CellParams = {
        a: 3 + 6 * rand(), b: 3 + 6 * rand(), c: 3 + 6 * rand(),
        alpha: 70 + 40 * rand(), beta: 70 + 40 * rand(), gamma: 70 + 40 * rand(),
      };
      const basis = cellToBasis(cell);
      const m = 5 + Math.floor(20 * rand());
      const frac = new Float64Array(3 * m).map(() => rand());
      const atomicNumbers = new Uint8Array(m).map(() => [1, 6, 8, 17][Math.floor(4 * rand())]!);
      const got = findMolecules({ basis, count: m, frac, atomicNumbers });
      // brute force
      const parent = Array.from({ length: m }, (_, i) => i);
      const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i]!)));
      let overlaps = 0;
      for (let i = 0; i < m; i++) {
        for (let j = i; j < m; j++) {
          const cut = covalentRadiusAngstrom(atomicNumbers[i]!)! + covalentRadiusAngstrom(atomicNumbers[j]!)! + 0.4;
          for (let n0 = -3; n0 <= 3; n0++) for (let n1 = -3; n1 <= 3; n1++) for (let n2 = -3; n2 <= 3; n2++) {
            if (i === j && !(n0 > 0 || (n0 === 0 && (n1 > 0 || (n1 === 0 && n2 > 0))))) continue;
            const e = [frac[3 * j]! + n0 - frac[3 * i]!, frac[3 * j + 1]! + n1 - frac[3 * i + 1]!, frac[3 * j + 2]! + n2 - frac[3 * i + 2]!];
            let d2 = 0;
            for (let c = 0; c < 3; c++) {
              const x = e[0]! * basis[c]! + e[1]! * basis[3 + c]! + e[2]! * basis[6 + c]!;
              d2 += x * x;
            }
            if (d2 < cut * cut) {
              parent[find(i)] = find(j);
              if (d2 < OVERLAP_ANGSTROM ** 2) overlaps++;
            }
          }
        }
      }
      const same = (i: number, j: number) => find(i) === find(j);
      for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) expect(got.component[i] === got.component[j]).toBe(same(i, j));
      expect(got.overlaps).toBe(overlaps);
    }
  });
});
