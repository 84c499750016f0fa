// Hand-made periodic sets for tests: lattices, random sets, and the transformations that must not
// change an isometry invariant (change of basis, supercell, rotation, reflection, origin shift, atom
// order) or change it by a bounded amount (perturbation). Plain data in, plain data out.
import type { PeriodicPointSet, SymOp } from '../../src/types.js';
import { seededUniform } from '../../src/demo/prng.js';

/** The shared seeded uniform stream (mulberry32, common practice), so every data set is reproducible. */
export { seededUniform as seededRandom };

/** A P1 set from a basis (rows) and Cartesian motif points; every point is its own asymmetric unit. */
export function makeSet(dim: number, basis: ArrayLike<number>, motif: ArrayLike<number>): PeriodicPointSet {
  const m = motif.length / dim;
  if (!Number.isInteger(m)) throw new Error('motif length is not a multiple of dim');
  const asym = new Int32Array(m);
  for (let i = 0; i < m; i++) asym[i] = i;
  return {
    dim,
    basis: Float64Array.from(basis),
    motif: Float64Array.from(motif),
    atomicNumbers: new Uint8Array(m),
    asym,
    multiplicity: new Int32Array(m).fill(1),
  };
}

/** A P1 set from a basis and fractional motif coordinates. */
export function fromFractional(dim: number, basis: ArrayLike<number>, frac: ArrayLike<number>): PeriodicPointSet {
  return makeSet(dim, basis, fracToCart(dim, basis, frac));
}

export function fracToCart(dim: number, basis: ArrayLike<number>, frac: ArrayLike<number>): Float64Array {
  const m = frac.length / dim;
  const out = new Float64Array(m * dim);
  for (let p = 0; p < m; p++) {
    for (let c = 0; c < dim; c++) {
      let s = 0;
      for (let r = 0; r < dim; r++) s += frac[p * dim + r] * basis[r * dim + c];
      out[p * dim + c] = s;
    }
  }
  return out;
}

/** Simple cubic lattice with edge a (one point per cell). */
export function cubicLattice(a: number): PeriodicPointSet {
  return makeSet(3, [a, 0, 0, 0, a, 0, 0, 0, a], [0, 0, 0]);
}

/** Face-centred cubic: conventional cubic cell of edge a with 4 points. */
export function fccConventional(a: number): PeriodicPointSet {
  return fromFractional(3, [a, 0, 0, 0, a, 0, 0, 0, a], [0, 0, 0, 0, 0.5, 0.5, 0.5, 0, 0.5, 0.5, 0.5, 0]);
}

/** Face-centred cubic: primitive rhombohedral cell (vectors a/2 (0,1,1), (1,0,1), (1,1,0)). */
export function fccPrimitive(a: number): PeriodicPointSet {
  const h = a / 2;
  return makeSet(3, [0, h, h, h, 0, h, h, h, 0], [0, 0, 0]);
}

/** Body-centred cubic: conventional cubic cell of edge a with 2 points. */
export function bccConventional(a: number): PeriodicPointSet {
  return fromFractional(3, [a, 0, 0, 0, a, 0, 0, 0, a], [0, 0, 0, 0.5, 0.5, 0.5]);
}

/** Body-centred cubic: primitive cell (vectors a/2 (-1,1,1), (1,-1,1), (1,1,-1)). */
export function bccPrimitive(a: number): PeriodicPointSet {
  const h = a / 2;
  return makeSet(3, [-h, h, h, h, -h, h, h, h, -h], [0, 0, 0]);
}

/** A random basis with lengths in [3, 8) Å and no near-degenerate angles (|det| >= 0.4 * product of lengths). */
export function randomBasis(rand: () => number, dim: number): Float64Array {
  for (;;) {
    const b = new Float64Array(dim * dim);
    let prod = 1;
    for (let r = 0; r < dim; r++) {
      let len = 0;
      for (let c = 0; c < dim; c++) {
        b[r * dim + c] = rand() * 2 - 1;
        len += b[r * dim + c] ** 2;
      }
      len = Math.sqrt(len);
      if (len < 0.2) {
        prod = 0;
        break;
      }
      const target = 3 + 5 * rand();
      for (let c = 0; c < dim; c++) b[r * dim + c] *= target / len;
      prod *= target;
    }
    if (prod > 0 && Math.abs(det(b, dim)) >= 0.4 * prod) return b;
  }
}

/** A random P1 set: random basis, m points at random fractional positions. */
export function randomSet(rand: () => number, dim: number, m: number): PeriodicPointSet {
  const basis = randomBasis(rand, dim);
  const frac = new Float64Array(m * dim);
  for (let i = 0; i < frac.length; i++) frac[i] = rand();
  return fromFractional(dim, basis, frac);
}

/** A random integer matrix with determinant +1 or -1 (product of elementary row operations). */
export function randomUnimodular(rand: () => number, dim: number, steps = 6, maxFactor = 2): Int32Array {
  const u = new Int32Array(dim * dim);
  for (let i = 0; i < dim; i++) u[i * dim + i] = 1;
  if (dim === 1) {
    if (rand() < 0.5) u[0] = -1;
    return u;
  }
  for (let s = 0; s < steps; s++) {
    const i = Math.floor(rand() * dim);
    let j = Math.floor(rand() * (dim - 1));
    if (j >= i) j++;
    const op = rand();
    if (op < 0.7) {
      let f = Math.floor(rand() * (2 * maxFactor + 1)) - maxFactor;
      if (f === 0) f = 1;
      for (let c = 0; c < dim; c++) u[i * dim + c] += f * u[j * dim + c];
    } else if (op < 0.85) {
      for (let c = 0; c < dim; c++) {
        const t = u[i * dim + c];
        u[i * dim + c] = u[j * dim + c];
        u[j * dim + c] = t;
      }
    } else {
      for (let c = 0; c < dim; c++) u[i * dim + c] = -u[i * dim + c];
    }
  }
  return u;
}

/** The same periodic set described with basis U*B (U unimodular), motif re-wrapped into the new cell. */
export function changeBasis(set: PeriodicPointSet, u: ArrayLike<number>): PeriodicPointSet {
  const d = set.dim;
  const nb = new Float64Array(d * d);
  for (let r = 0; r < d; r++) {
    for (let c = 0; c < d; c++) {
      let s = 0;
      for (let t = 0; t < d; t++) s += u[r * d + t] * set.basis[t * d + c];
      nb[r * d + c] = s;
    }
  }
  if (Math.abs(Math.abs(det(nb, d)) - Math.abs(det(set.basis, d))) > 1e-9 * Math.abs(det(set.basis, d))) {
    throw new Error('changeBasis needs a unimodular matrix');
  }
  return { ...set, basis: nb, motif: wrapInto(d, nb, set.motif) };
}

/** Cartesian points moved into the cell [0,1)^d of `basis`. */
export function wrapInto(dim: number, basis: ArrayLike<number>, motif: ArrayLike<number>): Float64Array {
  const inv = inv3(basis, dim);
  const m = motif.length / dim;
  const frac = new Float64Array(m * dim);
  for (let p = 0; p < m; p++) {
    for (let i = 0; i < dim; i++) {
      let f = 0;
      for (let c = 0; c < dim; c++) f += motif[p * dim + c] * inv[c * dim + i];
      frac[p * dim + i] = f - Math.floor(f);
    }
  }
  return fracToCart(dim, basis, frac);
}

/** Supercell n_1 x ... x n_d: basis rows scaled, motif repeated; asym/multiplicity follow the copies. */
export function supercell(set: PeriodicPointSet, counts: number[]): PeriodicPointSet {
  const d = set.dim;
  const m = set.motif.length / d;
  const copies = counts.reduce((a, b) => a * b, 1);
  const nb = new Float64Array(d * d);
  for (let r = 0; r < d; r++) for (let c = 0; c < d; c++) nb[r * d + c] = set.basis[r * d + c] * counts[r];
  const motif = new Float64Array(m * copies * d);
  const idx = new Array<number>(d).fill(0);
  for (let copy = 0; copy < copies; copy++) {
    let rest = copy;
    for (let r = 0; r < d; r++) {
      idx[r] = rest % counts[r];
      rest = Math.floor(rest / counts[r]);
    }
    for (let p = 0; p < m; p++) {
      for (let c = 0; c < d; c++) {
        let s = set.motif[p * d + c];
        for (let r = 0; r < d; r++) s += idx[r] * set.basis[r * d + c];
        motif[(copy * m + p) * d + c] = s;
      }
    }
  }
  // Copies of an asymmetric-unit point stay equivalent to it: same representative, multiplicity times the copies.
  return {
    dim: d,
    basis: nb,
    motif,
    atomicNumbers: new Uint8Array(m * copies),
    asym: Int32Array.from(set.asym),
    multiplicity: Int32Array.from(set.multiplicity, (x) => x * copies),
  };
}

/** A random orthogonal matrix (rotation, or reflection when `reflect`), from Gram-Schmidt on random vectors. */
export function randomOrthogonal(rand: () => number, dim: number, reflect: boolean): Float64Array {
  for (;;) {
    const q = new Float64Array(dim * dim);
    let ok = true;
    for (let r = 0; r < dim && ok; r++) {
      for (let c = 0; c < dim; c++) q[r * dim + c] = rand() * 2 - 1;
      for (let t = 0; t < r; t++) {
        let s = 0;
        for (let c = 0; c < dim; c++) s += q[r * dim + c] * q[t * dim + c];
        for (let c = 0; c < dim; c++) q[r * dim + c] -= s * q[t * dim + c];
      }
      let n = 0;
      for (let c = 0; c < dim; c++) n += q[r * dim + c] ** 2;
      n = Math.sqrt(n);
      if (n < 0.1) ok = false;
      for (let c = 0; c < dim; c++) q[r * dim + c] /= n;
    }
    if (!ok) continue;
    const sign = det(q, dim) > 0 ? 1 : -1;
    if ((sign < 0) !== reflect) for (let c = 0; c < dim; c++) q[c] = -q[c];
    return q;
  }
}

/** Apply x -> Q x + shift to every lattice vector (without shift) and motif point (with shift). */
export function moveRigidly(set: PeriodicPointSet, q: ArrayLike<number>, shift: ArrayLike<number>): PeriodicPointSet {
  const d = set.dim;
  const apply = (src: Float64Array, withShift: boolean) => {
    const out = new Float64Array(src.length);
    for (let p = 0; p < src.length / d; p++) {
      for (let r = 0; r < d; r++) {
        let s = withShift ? shift[r] : 0;
        for (let c = 0; c < d; c++) s += q[r * d + c] * src[p * d + c];
        out[p * d + r] = s;
      }
    }
    return out;
  };
  return { ...set, basis: apply(set.basis, false), motif: apply(set.motif, true) };
}

/** The same set with its motif points listed in a random order (asym indices follow). */
export function shuffleMotif(set: PeriodicPointSet, rand: () => number): PeriodicPointSet {
  const d = set.dim;
  const m = set.motif.length / d;
  const perm = Array.from({ length: m }, (_, i) => i);
  for (let i = m - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [perm[i], perm[j]] = [perm[j], perm[i]];
  }
  const where = new Int32Array(m);
  const motif = new Float64Array(m * d);
  const numbers = new Uint8Array(m);
  for (let i = 0; i < m; i++) {
    where[perm[i]] = i;
    for (let c = 0; c < d; c++) motif[i * d + c] = set.motif[perm[i] * d + c];
    numbers[i] = set.atomicNumbers[perm[i]];
  }
  return { ...set, motif, atomicNumbers: numbers, asym: Int32Array.from(set.asym, (a) => where[a]) };
}

/** Every motif point moved by a random vector of length at most eps (Å). Returns a P1 set. */
export function perturb(set: PeriodicPointSet, eps: number, rand: () => number): PeriodicPointSet {
  const d = set.dim;
  const m = set.motif.length / d;
  const motif = Float64Array.from(set.motif);
  for (let p = 0; p < m; p++) {
    const v = new Float64Array(d);
    let n = 0;
    for (let c = 0; c < d; c++) {
      v[c] = rand() * 2 - 1;
      n += v[c] * v[c];
    }
    n = Math.sqrt(n) || 1;
    const len = eps * rand();
    for (let c = 0; c < d; c++) motif[p * d + c] += (v[c] / n) * len;
  }
  return makeSet(d, set.basis, motif);
}

/** Every motif point as its own asymmetric unit (forgets symmetry). */
export function asP1(set: PeriodicPointSet): PeriodicPointSet {
  return makeSet(set.dim, set.basis, set.motif);
}

/**
 * A 3D set built from asymmetric-unit points (fractional) and symmetry operations, the way a CIF reader
 * expands sites: apply every operation, wrap to [0,1), merge images closer than `mergeFrac` (special
 * positions). The result carries `asym`/`multiplicity`; `asP1` of it is the same set without them.
 */
export function expandOperations(basis: ArrayLike<number>, asymFrac: ArrayLike<number>, ops: SymOp[], mergeFrac = 1e-6): PeriodicPointSet {
  const frac: number[] = [];
  const asym: number[] = [];
  const multiplicity: number[] = [];
  for (let a = 0; a < asymFrac.length / 3; a++) {
    const start = frac.length / 3;
    for (const op of ops) {
      const x = [0, 0, 0];
      for (let r = 0; r < 3; r++) {
        let s = op.trans[r];
        for (let c = 0; c < 3; c++) s += op.rot[r * 3 + c] * asymFrac[a * 3 + c];
        x[r] = s - Math.floor(s);
      }
      let seen = false;
      for (let p = start; p < frac.length / 3 && !seen; p++) {
        let far = false;
        for (let r = 0; r < 3; r++) {
          let dlt = Math.abs(frac[p * 3 + r] - x[r]);
          dlt = Math.min(dlt, 1 - dlt);
          if (dlt > mergeFrac) far = true;
        }
        if (!far) seen = true;
      }
      if (!seen) frac.push(...x);
    }
    asym.push(start);
    multiplicity.push(frac.length / 3 - start);
  }
  const set = fromFractional(3, basis, frac);
  return { ...set, asym: Int32Array.from(asym), multiplicity: Int32Array.from(multiplicity) };
}

/** Operations of P2_1/c (unique axis b, cell choice 1): x,y,z; -x,y+1/2,-z+1/2; -x,-y,-z; x,-y+1/2,z+1/2 (International Tables Vol. A). */
export const P21C_OPS: SymOp[] = [
  { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] },
  { rot: [-1, 0, 0, 0, 1, 0, 0, 0, -1], trans: [0, 0.5, 0.5] },
  { rot: [-1, 0, 0, 0, -1, 0, 0, 0, -1], trans: [0, 0, 0] },
  { rot: [1, 0, 0, 0, -1, 0, 0, 0, 1], trans: [0, 0.5, 0.5] },
];

/** Operations of P-1: identity and inversion through the origin (International Tables Vol. A). */
export const P1BAR_OPS: SymOp[] = [
  { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] },
  { rot: [-1, 0, 0, 0, -1, 0, 0, 0, -1], trans: [0, 0, 0] },
];

/** Operations of P2_1 (unique axis b): x,y,z; -x,y+1/2,-z (International Tables Vol. A). */
export const P21_OPS: SymOp[] = [
  { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] },
  { rot: [-1, 0, 0, 0, 1, 0, 0, 0, -1], trans: [0, 0.5, 0] },
];

/** A monoclinic basis (a along x, b along y, beta between a and c), as International Tables Vol. B sets it up. */
export function monoclinicBasis(a: number, b: number, c: number, betaDeg: number): Float64Array {
  const beta = (betaDeg * Math.PI) / 180;
  return Float64Array.from([a, 0, 0, 0, b, 0, c * Math.cos(beta), 0, c * Math.sin(beta)]);
}

export function det(m: ArrayLike<number>, dim: number): number {
  if (dim === 1) return m[0];
  if (dim === 2) return m[0] * m[3] - m[1] * m[2];
  return m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
}

function inv3(m: ArrayLike<number>, dim: number): Float64Array {
  const dt = det(m, dim);
  const out = new Float64Array(dim * dim);
  if (dim === 1) out[0] = 1 / m[0];
  else if (dim === 2) {
    out[0] = m[3] / dt;
    out[1] = -m[1] / dt;
    out[2] = -m[2] / dt;
    out[3] = m[0] / dt;
  } else {
    out[0] = (m[4] * m[8] - m[5] * m[7]) / dt;
    out[1] = (m[2] * m[7] - m[1] * m[8]) / dt;
    out[2] = (m[1] * m[5] - m[2] * m[4]) / dt;
    out[3] = (m[5] * m[6] - m[3] * m[8]) / dt;
    out[4] = (m[0] * m[8] - m[2] * m[6]) / dt;
    out[5] = (m[2] * m[3] - m[0] * m[5]) / dt;
    out[6] = (m[3] * m[7] - m[4] * m[6]) / dt;
    out[7] = (m[1] * m[6] - m[0] * m[7]) / dt;
    out[8] = (m[0] * m[4] - m[1] * m[3]) / dt;
  }
  return out;
}
