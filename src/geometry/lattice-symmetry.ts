// The point group of a lattice within a distance tolerance: every integer change of basis W (det ±1) that
// maps the basis onto lattice vectors of the same lengths and angles. These are the only rotations a crystal
// on this lattice can have, so the motif search tries nothing else.
// Method: images of basis vector i are lattice vectors of the same length; they are enumerated exactly in a
// box bounded by the dual basis (|n_i| <= |v| |b*_i|), then combined in threes whose pairwise dot products
// match. This is the approach of Y. Le Page, "The derivation of the axes of the conventional unit cell from
// the dimensions of the Buerger-reduced cell", J. Appl. Cryst. 15 (1982) 255-259, and of R. W.
// Grosse-Kunstleve, Acta Cryst. A 55 (1999) 383-395, done here by direct search on a reduced cell.
import { determinant, inverse } from './reduce.js';

/**
 * Rotations of the lattice with basis rows `basis` (a reduced basis keeps the search small), as integer
 * 3x3 matrices acting on fractional column coordinates (x' = W x), identity first. A rotation is accepted
 * when each basis vector's image has its length within `toleranceAngstrom` and each pair of images has its
 * dot product within toleranceAngstrom * (|b_j| + |b_k|) (what moving each vector by up to the tolerance allows).
 */
export function latticeRotations(basis: ArrayLike<number>, toleranceAngstrom: number): number[][] {
  const len = [0, 1, 2].map((r) => Math.hypot(basis[3 * r], basis[3 * r + 1], basis[3 * r + 2]));
  const gram = new Float64Array(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) gram[3 * i + j] = dotRows(basis, i, basis, j);
  // Dual basis: the columns of B^-1 (so that n_i = v . b*_i for v = sum n_i b_i).
  const inv = inverse(basis, 3);
  const longest = Math.max(len[0], len[1], len[2]) + toleranceAngstrom;
  const bound = [0, 1, 2].map((i) => Math.floor(longest * Math.hypot(inv[i], inv[3 + i], inv[6 + i]) + 1e-9));

  // Candidate images of each basis vector: lattice vectors of the same length.
  const cand: number[][][] = [[], [], []];
  for (let n0 = -bound[0]; n0 <= bound[0]; n0++) {
    for (let n1 = -bound[1]; n1 <= bound[1]; n1++) {
      for (let n2 = -bound[2]; n2 <= bound[2]; n2++) {
        if (n0 === 0 && n1 === 0 && n2 === 0) continue;
        const x = n0 * basis[0] + n1 * basis[3] + n2 * basis[6];
        const y = n0 * basis[1] + n1 * basis[4] + n2 * basis[7];
        const z = n0 * basis[2] + n1 * basis[5] + n2 * basis[8];
        const l = Math.hypot(x, y, z);
        for (let i = 0; i < 3; i++) if (Math.abs(l - len[i]) <= toleranceAngstrom) cand[i].push([n0, n1, n2, x, y, z]);
      }
    }
  }

  const out: number[][] = [];
  const dotOk = (u: number[], w: number[], j: number, k: number) =>
    Math.abs(u[3] * w[3] + u[4] * w[4] + u[5] * w[5] - gram[3 * j + k]) <= toleranceAngstrom * (len[j] + len[k]);
  for (const u of cand[0]) {
    for (const v of cand[1]) {
      if (!dotOk(u, v, 0, 1)) continue;
      for (const w of cand[2]) {
        if (!dotOk(u, w, 0, 2) || !dotOk(v, w, 1, 2)) continue;
        // Rows of M are the images of the basis vectors in basis coordinates; W = M^T acts on fractional columns.
        const m = [u[0], u[1], u[2], v[0], v[1], v[2], w[0], w[1], w[2]];
        const d = determinant(m, 3);
        if (d !== 1 && d !== -1) continue;
        out.push([m[0], m[3], m[6], m[1], m[4], m[7], m[2], m[5], m[8]]);
      }
    }
  }
  // Identity first, then a fixed order (the enumeration order), so results are reproducible.
  const id = out.findIndex((w) => w[0] === 1 && w[4] === 1 && w[8] === 1 && w[1] === 0 && w[2] === 0 && w[3] === 0 && w[5] === 0 && w[6] === 0 && w[7] === 0);
  if (id > 0) out.unshift(...out.splice(id, 1));
  return out;
}

function dotRows(a: ArrayLike<number>, i: number, b: ArrayLike<number>, j: number): number {
  return a[3 * i] * b[3 * j] + a[3 * i + 1] * b[3 * j + 1] + a[3 * i + 2] * b[3 * j + 2];
}
