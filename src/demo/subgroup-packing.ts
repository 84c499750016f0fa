// A generated packing re-written with only a subgroup H of its operations: one molecule per coset of H, the
// coset representative's image of the molecule, turned about its centre by a chosen angle (each coset about
// its own random axis; the first coset, H itself, is left as it is). The result keeps every operation of H
// exactly and breaks the others by about the angle times the molecule's radius, so it is a crystal of lower
// symmetry that sits a known distance from the original group. Used by the symmetry benchmark and tests.
import type { Rng } from './prng.js';
import { groupOps } from './packing.js';
import type { Packing } from './packing.js';
import type { Op } from './space-groups.js';
import { basisOf, type Expressed } from './rewrite.js';
import { inverse, matMul, matVec, rotation, vecMat, type Vec3 } from './mat3.js';

/**
 * `packing` with the operations listed in `keep` (indices into its group's operations, a subgroup containing
 * the identity, index 0) and the other operations' molecules turned by `turnDeg` about random axes.
 * Throws when `keep` is not closed (modulo lattice translations).
 */
export function subgroupPacking(packing: Packing, keep: number[], turnDeg: number, rng: Rng, atomsPerMolecule: number, elements: string[]): Expressed {
  const ops = groupOps(packing.group);
  const h = keep.map((i) => ops[i]);
  if (!keep.includes(0)) throw new Error('the subgroup must contain the identity (operation 0)');
  for (const a of h) for (const b of h) if (!h.some((c) => sameOp(c, compose(a, b)))) throw new Error('the kept operations are not closed');
  // Right coset representatives: each operation not yet covered by H g starts a coset (expanding the listed
  // molecule g(mol) by H gives the molecules of H g).
  const covered = new Array<boolean>(ops.length).fill(false);
  const reps: number[] = [];
  for (let g = 0; g < ops.length; g++) {
    if (covered[g]) continue;
    reps.push(g);
    for (const k of h) {
      const gk = compose(k, ops[g]);
      const idx = ops.findIndex((o) => sameOp(o, gk));
      if (idx >= 0) covered[idx] = true;
    }
  }
  const basis = basisOf(packing.cell);
  const inv = inverse(basis);
  const n = atomsPerMolecule;
  const frac = new Float64Array(3 * n * reps.length);
  reps.forEach((g, c) => {
    const op = ops[g];
    const cart: Vec3[] = [];
    const centre: Vec3 = [0, 0, 0];
    for (let a = 0; a < n; a++) {
      const f = matVec(op.rot, [packing.frac[3 * a], packing.frac[3 * a + 1], packing.frac[3 * a + 2]]);
      const p = vecMat([f[0] + op.trans[0], f[1] + op.trans[1], f[2] + op.trans[2]], basis);
      cart.push(p);
      for (let r = 0; r < 3; r++) centre[r] += p[r] / n;
    }
    const turn = rotation([rng.normal(1), rng.normal(1), rng.normal(1)], c === 0 ? 0 : (turnDeg * Math.PI) / 180);
    for (let a = 0; a < n; a++) {
      const rel = matVec(turn, [cart[a][0] - centre[0], cart[a][1] - centre[1], cart[a][2] - centre[2]]);
      const moved = vecMat([rel[0] + centre[0], rel[1] + centre[1], rel[2] + centre[2]], inv);
      frac.set(moved, 3 * (c * n + a));
    }
  });
  const allElements: string[] = [];
  for (let c = 0; c < reps.length; c++) allElements.push(...elements);
  return { basis, ops: h, frac, elements: allElements, atomsPerMolecule: n };
}

/** a after b. */
function compose(a: Op, b: Op): Op {
  const t = matVec(a.rot, b.trans);
  return { rot: matMul(a.rot, b.rot), trans: [t[0] + a.trans[0], t[1] + a.trans[1], t[2] + a.trans[2]] };
}

function sameOp(a: Op, b: Op): boolean {
  for (let i = 0; i < 9; i++) if (Math.abs(a.rot[i] - b.rot[i]) > 1e-9) return false;
  for (let r = 0; r < 3; r++) {
    const d = a.trans[r] - b.trans[r];
    if (Math.abs(d - Math.round(d)) > 1e-9) return false;
  }
  return true;
}
