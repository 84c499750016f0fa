// Operations (W, t) that map a motif onto itself within a distance tolerance, for given rotations W.
// Candidate translations come from one atom of the rarest element: its image under W must land on an atom
// of the same element, so t = x_j - W x_0 for each such atom j; each candidate is then checked atom by atom
// (most wrong ones fail at the first or second atom), and an accepted one is refined to the mean offset
// over all atoms. The approach is the usual one of symmetry finders (A. Togo & I. Tanaka, "Spglib: a
// software library for crystal symmetry search", arXiv:1808.01590, 2018).
import { findAtom, wrapUnit, type MotifIndex } from './motif-index.js';

export interface MotifOperation {
  /** Integer rotation on fractional columns, row-major. */
  rot: number[];
  /** Translation (fractional), refined to the mean over all atoms, wrapped to [0,1). */
  trans: [number, number, number];
  /** Atom each atom lands on. */
  perm: Int32Array;
  /** Largest distance (Å) between an atom's image and the atom it lands on, after refinement. */
  deviationAngstrom: number;
}

/**
 * For each rotation, the translations that map every atom onto an atom of its element within the index's
 * tolerance. With `everyTranslation` all are returned (pure translations of a supercell); otherwise the
 * best one per rotation (smallest largest deviation), as a primitive cell has at most one.
 */
export function motifOperations(ix: MotifIndex, rotations: number[][], everyTranslation: boolean): MotifOperation[] {
  const m = ix.count;
  if (m === 0) return [];
  const { rare, members } = rarestElement(ix);
  const x0 = 3 * rare;
  const perm = new Int32Array(m);
  const stamp = new Int32Array(m);
  const d2 = new Float64Array(1);
  let generation = 0;
  const out: MotifOperation[] = [];
  for (const w of rotations) {
    // Image of the reference atom under W (no translation yet).
    const r0 = w[0] * ix.frac[x0] + w[1] * ix.frac[x0 + 1] + w[2] * ix.frac[x0 + 2];
    const r1 = w[3] * ix.frac[x0] + w[4] * ix.frac[x0 + 1] + w[5] * ix.frac[x0 + 2];
    const r2 = w[6] * ix.frac[x0] + w[7] * ix.frac[x0 + 1] + w[8] * ix.frac[x0 + 2];
    let best: MotifOperation | null = null;
    for (const j of members) {
      const t0 = ix.frac[3 * j] - r0, t1 = ix.frac[3 * j + 1] - r1, t2 = ix.frac[3 * j + 2] - r2;
      generation++;
      let ok = true;
      // The reference atom first (it lands on j by construction), then the others in order.
      for (let step = 0; step < m && ok; step++) {
        const i = step === 0 ? rare : step <= rare ? step - 1 : step;
        const f0 = ix.frac[3 * i], f1 = ix.frac[3 * i + 1], f2 = ix.frac[3 * i + 2];
        const hit = findAtom(
          ix,
          w[0] * f0 + w[1] * f1 + w[2] * f2 + t0,
          w[3] * f0 + w[4] * f1 + w[5] * f2 + t1,
          w[6] * f0 + w[7] * f1 + w[8] * f2 + t2,
          ix.types[i], d2,
        );
        if (hit < 0 || stamp[hit] === generation) ok = false;
        else {
          stamp[hit] = generation;
          perm[i] = hit;
        }
      }
      if (!ok) continue;
      const op = refine(ix, w, [t0, t1, t2], perm);
      if (everyTranslation) out.push(op);
      else if (best === null || op.deviationAngstrom < best.deviationAngstrom) best = op;
    }
    if (best !== null) out.push(best);
  }
  return out;
}

/** The element with the fewest atoms (ties: the smaller atomic number) and its first atom. */
function rarestElement(ix: MotifIndex): { rare: number; members: number[] } {
  const counts = new Map<number, number>();
  for (let i = 0; i < ix.count; i++) counts.set(ix.types[i], (counts.get(ix.types[i]) ?? 0) + 1);
  let type = -1;
  let fewest = Infinity;
  for (const [t, c] of counts) if (c < fewest || (c === fewest && t < type)) [type, fewest] = [t, c];
  const members: number[] = [];
  for (let i = 0; i < ix.count; i++) if (ix.types[i] === type) members.push(i);
  return { rare: members[0], members };
}

/** Move t to the mean offset of all atoms and measure the largest remaining distance. */
function refine(ix: MotifIndex, w: number[], t: number[], perm: Int32Array): MotifOperation {
  const m = ix.count;
  const B = ix.basis;
  let s0 = 0, s1 = 0, s2 = 0;
  for (let i = 0; i < m; i++) {
    offset(ix, w, t, perm, i, OFFSET);
    s0 += OFFSET[0];
    s1 += OFFSET[1];
    s2 += OFFSET[2];
  }
  s0 /= m;
  s1 /= m;
  s2 /= m;
  let worst = 0;
  for (let i = 0; i < m; i++) {
    offset(ix, w, t, perm, i, OFFSET);
    const d0 = OFFSET[0] - s0, d1 = OFFSET[1] - s1, d2 = OFFSET[2] - s2;
    const x = d0 * B[0] + d1 * B[3] + d2 * B[6];
    const y = d0 * B[1] + d1 * B[4] + d2 * B[7];
    const z = d0 * B[2] + d1 * B[5] + d2 * B[8];
    worst = Math.max(worst, x * x + y * y + z * z);
  }
  return {
    rot: w.slice(),
    trans: [wrapUnit(t[0] + s0), wrapUnit(t[1] + s1), wrapUnit(t[2] + s2)],
    perm: perm.slice(),
    deviationAngstrom: Math.sqrt(worst),
  };
}

const OFFSET = new Float64Array(3);

/** Fractional offset from atom i's image under (w, t) to its partner, nearest lattice translate, into `out`. */
function offset(ix: MotifIndex, w: number[], t: number[], perm: Int32Array, i: number, out: Float64Array): void {
  const f = ix.frac;
  const a0 = f[3 * i], a1 = f[3 * i + 1], a2 = f[3 * i + 2];
  const j = perm[i];
  const d0 = f[3 * j] - (w[0] * a0 + w[1] * a1 + w[2] * a2 + t[0]);
  const d1 = f[3 * j + 1] - (w[3] * a0 + w[4] * a1 + w[5] * a2 + t[1]);
  const d2 = f[3 * j + 2] - (w[6] * a0 + w[7] * a1 + w[8] * a2 + t[2]);
  out[0] = d0 - Math.round(d0);
  out[1] = d1 - Math.round(d1);
  out[2] = d2 - Math.round(d2);
}
