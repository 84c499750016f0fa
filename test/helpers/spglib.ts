// Live reference symmetry detection with spglib (Debian's python3-spglib, run as /usr/bin/python3 through
// scripts/symmetry-spglib.py), and the comparison of a detection with it. A missing spglib is a test failure
// with a clear message, never a silent skip.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { expect } from 'vitest';
import type { SymmetryCell, SymmetryDetection } from '../../src/geometry/detect-symmetry.js';
import { defaultSetting, settingByHall, settingOperations } from '../../src/geometry/space-group-table.js';
import { basisVolume } from '../../src/geometry/cell.js';
import { inverse } from '../../src/geometry/reduce.js';
import { mul3, mulVec3 } from '../../src/geometry/matrix3.js';

export const SPGLIB_PYTHON = '/usr/bin/python3';
const SCRIPT = fileURLToPath(new URL('../../scripts/symmetry-spglib.py', import.meta.url));

export interface SpglibDataset {
  error?: string;
  number: number;
  international: string;
  hall: string;
  hall_number: number;
  rotations: number[][][];
  translations: number[][];
  equivalent_atoms: number[];
  std_lattice: number[][];
  primitive_lattice: number[][];
  transformation_matrix: number[][];
  origin_shift: number[];
}

/** spglib's dataset for each cell at `symprec` (Å), in the setting our table calls the default. */
export function spglibDatasets(cells: SymmetryCell[], symprec: number): { seconds: number; results: SpglibDataset[] } {
  const defaults: Record<number, string> = {};
  for (let n = 1; n <= 230; n++) defaults[n] = defaultSetting(n).hall;
  const job = {
    symprec,
    defaults,
    cells: cells.map((c) => ({
      lattice: [0, 1, 2].map((r) => [c.basis[3 * r], c.basis[3 * r + 1], c.basis[3 * r + 2]]),
      positions: Array.from({ length: c.types.length }, (_, i) => [c.frac[3 * i], c.frac[3 * i + 1], c.frac[3 * i + 2]]),
      numbers: Array.from(c.types),
    })),
  };
  const r = spawnSync(SPGLIB_PYTHON, [SCRIPT], { input: JSON.stringify(job), encoding: 'utf8', maxBuffer: 1 << 28 });
  if (r.error) throw new Error(`cannot run ${SPGLIB_PYTHON} for the spglib reference check: ${r.error.message}`);
  if (r.status !== 0) throw new Error(`the spglib reference check failed (is Debian's python3-spglib installed? .ci/run installs it):\n${r.stderr}`);
  return JSON.parse(r.stdout) as { seconds: number; results: SpglibDataset[] };
}

/**
 * Our detection equals spglib's: group number, setting (spglib's Hall symbol names the same setting of the
 * table), the operations in the given cell (same rotations, translations within the tolerance), the orbits of
 * atoms, and the primitive and conventional cell volumes. Also checks that our change of basis takes our
 * operations to exactly the default setting's operations (built from its Hall symbol).
 */
export function expectSameAsSpglib(label: string, cell: SymmetryCell, ours: SymmetryDetection, ref: SpglibDataset, tol: number): void {
  expect(ref.error, `${label}: spglib failed`).toBeUndefined();
  expect(ours.ok, `${label}: ${ours.ok ? '' : ours.reason}`).toBe(true);
  if (!ours.ok) return;
  const s = ours.symmetry;
  expect(s.number, `${label}: group number (spglib ${ref.international})`).toBe(ref.number);
  expect(settingByHall(ref.hall), `${label}: spglib's setting ${ref.hall}`).toBe(defaultSetting(s.number));
  expect(s.hall).toBe(defaultSetting(ref.number).hall);
  // Operations in the given cell, as sets.
  expect(s.operations.length, `${label}: number of operations`).toBe(ref.rotations.length);
  const B = cell.basis;
  for (let k = 0; k < ref.rotations.length; k++) {
    const rot = ref.rotations[k].flat();
    const t = ref.translations[k];
    const hit = s.operations.some((o) => o.rot.every((v, i) => v === rot[i]) && cartesianGap(o.trans, t, B) <= tol);
    expect(hit, `${label}: spglib's operation ${rot.join(',')} | ${t.map((v) => v.toFixed(4)).join(',')}`).toBe(true);
  }
  // Orbits: the same partition of the atoms.
  expect(partition(Array.from(s.equivalentAtoms)), `${label}: orbits`).toEqual(partition(ref.equivalent_atoms));
  expect(basisVolume(s.primitiveBasis)).toBeCloseTo(Math.abs(det(ref.primitive_lattice.flat())), 3);
  expect(basisVolume(s.conventionalBasis) / Math.abs(det(ref.std_lattice.flat()))).toBeCloseTo(1, 3);
  expectStandardised(label, s, tol);
}

/** x_std = T x + p takes every operation to one of the default setting's operations (within the tolerance in Å). */
export function expectStandardised(
  label: string,
  s: { transformation: number[]; originShift: number[]; operations: { rot: number[]; trans: number[] }[]; number: number; conventionalBasis: number[] },
  tol: number,
): void {
  const T = s.transformation;
  const tInv = inverse(T, 3);
  const target = settingOperations(defaultSetting(s.number));
  for (const o of s.operations) {
    const w = mul3(mul3(T, o.rot), tInv).map((v) => Math.round(v * 1e6) / 1e6 + 0);
    const tp = mulVec3(T, o.trans);
    const wp = mulVec3(w, s.originShift);
    const t = tp.map((v, r) => v + s.originShift[r] - wp[r]);
    const hit = target.some((g) => g.rot.every((v, i) => v === w[i]) && cartesianGap(g.trans, t, s.conventionalBasis) <= tol);
    expect(hit, `${label}: operation ${o.rot.join(',')} in the standard setting`).toBe(true);
  }
}

function cartesianGap(a: ArrayLike<number>, b: ArrayLike<number>, basis: ArrayLike<number>): number {
  const d = [0, 1, 2].map((r) => {
    const x = a[r] - b[r];
    return x - Math.round(x);
  });
  return Math.hypot(
    d[0] * basis[0] + d[1] * basis[3] + d[2] * basis[6],
    d[0] * basis[1] + d[1] * basis[4] + d[2] * basis[7],
    d[0] * basis[2] + d[1] * basis[5] + d[2] * basis[8],
  );
}

/** Each atom's class named by the smallest index in it. */
function partition(rep: number[]): number[] {
  const first = new Map<number, number>();
  return rep.map((r, i) => {
    if (!first.has(r)) first.set(r, i);
    return first.get(r)!;
  });
}

function det(m: number[]): number {
  return m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
}
