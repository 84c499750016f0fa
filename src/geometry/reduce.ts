// Lattice basis reduction (LLL) in 1, 2 or 3 dimensions.
//
// Method: A. K. Lenstra, H. W. Lenstra Jr. & L. Lovász, "Factoring polynomials with rational
// coefficients", Math. Ann. 261 (1982) 515-534, in floating point with the Gram-Schmidt data
// recomputed after every swap (cheap for d <= 3). The neighbour search uses the reduced basis so that
// a skewed cell costs the same as a nearly orthogonal one; reduction never changes the lattice, so
// results do not depend on it, only the running time does.

/** Lovász parameter delta in (1/4, 1); 0.99 is the usual choice (common practice). */
export const LLL_DELTA = 0.99;

export interface ReducedBasis {
  dim: number;
  /** dim*dim, row r is reduced lattice vector r (same units as the input). */
  basis: Float64Array;
  /** dim*dim integer matrix U (row-major) with reduced = U * input; det U = +1 or -1. */
  transform: Int32Array;
}

/**
 * LLL-reduce the lattice basis `basis` (dim*dim, rows are lattice vectors).
 * Throws when the rows are (numerically) linearly dependent or not finite.
 */
export function reduceBasis(basis: Float64Array | ArrayLike<number>, dim: number, delta = LLL_DELTA): ReducedBasis {
  if (!(dim >= 1 && dim <= 3 && Number.isInteger(dim))) throw new Error(`basis reduction supports dimension 1, 2 or 3, not ${dim}`);
  if (basis.length !== dim * dim) throw new Error(`a ${dim}-dimensional basis needs ${dim * dim} numbers, got ${basis.length}`);
  const b = Float64Array.from(basis as ArrayLike<number>);
  for (let i = 0; i < b.length; i++) {
    if (!Number.isFinite(b[i])) throw new Error('the lattice basis contains a value that is not a finite number');
  }
  const vol = Math.abs(determinant(b, dim));
  let scale = 0;
  for (let r = 0; r < dim; r++) scale = Math.max(scale, Math.sqrt(dot(b, r, b, r, dim)));
  if (!(vol > 1e-10 * Math.pow(scale, dim))) throw new Error('the lattice basis is degenerate (its vectors are linearly dependent or zero)');

  const u = new Int32Array(dim * dim);
  for (let i = 0; i < dim; i++) u[i * dim + i] = 1;
  const mu = new Float64Array(dim * dim);
  const bstar = new Float64Array(dim * dim);
  const bstarSq = new Float64Array(dim);
  gramSchmidt(b, dim, mu, bstar, bstarSq);

  let k = 1;
  let guard = 0;
  while (k < dim) {
    if (++guard > 100000) throw new Error('basis reduction did not converge (the cell is far too skewed to handle)');
    // Size reduction: make |mu_kj| <= 1/2 for j < k by subtracting integer multiples of b_j.
    for (let j = k - 1; j >= 0; j--) {
      const q = Math.round(mu[k * dim + j]);
      if (q !== 0) {
        for (let c = 0; c < dim; c++) {
          b[k * dim + c] -= q * b[j * dim + c];
          u[k * dim + c] -= q * u[j * dim + c];
        }
        gramSchmidt(b, dim, mu, bstar, bstarSq);
      }
    }
    // Lovász condition: keep the order when |b*_k|^2 >= (delta - mu^2) |b*_{k-1}|^2, else swap and step back.
    const m = mu[k * dim + k - 1];
    if (bstarSq[k] >= (delta - m * m) * bstarSq[k - 1]) {
      k++;
    } else {
      for (let c = 0; c < dim; c++) {
        const t = b[k * dim + c];
        b[k * dim + c] = b[(k - 1) * dim + c];
        b[(k - 1) * dim + c] = t;
        const s = u[k * dim + c];
        u[k * dim + c] = u[(k - 1) * dim + c];
        u[(k - 1) * dim + c] = s;
      }
      gramSchmidt(b, dim, mu, bstar, bstarSq);
      k = Math.max(k - 1, 1);
    }
  }
  return { dim, basis: b, transform: u };
}

/** Gram-Schmidt coefficients mu (lower triangle), orthogonal vectors b* and their squared lengths. */
export function gramSchmidt(b: Float64Array, dim: number, mu: Float64Array, bstar: Float64Array, bstarSq: Float64Array): void {
  for (let i = 0; i < dim; i++) {
    for (let c = 0; c < dim; c++) bstar[i * dim + c] = b[i * dim + c];
    for (let j = 0; j < i; j++) {
      const m = dot(b, i, bstar, j, dim) / bstarSq[j];
      mu[i * dim + j] = m;
      for (let c = 0; c < dim; c++) bstar[i * dim + c] -= m * bstar[j * dim + c];
    }
    mu[i * dim + i] = 1;
    bstarSq[i] = dot(bstar, i, bstar, i, dim);
  }
}

/** Determinant of a dim*dim row-major matrix (dim <= 3). */
export function determinant(m: ArrayLike<number>, dim: number): number {
  if (dim === 1) return m[0];
  if (dim === 2) return m[0] * m[3] - m[1] * m[2];
  return (
    m[0] * (m[4] * m[8] - m[5] * m[7]) -
    m[1] * (m[3] * m[8] - m[5] * m[6]) +
    m[2] * (m[3] * m[7] - m[4] * m[6])
  );
}

/** Inverse of a dim*dim row-major matrix (dim <= 3); throws when singular. */
export function inverse(m: ArrayLike<number>, dim: number): Float64Array {
  const det = determinant(m, dim);
  if (det === 0 || !Number.isFinite(det)) throw new Error('cannot invert a singular matrix');
  const out = new Float64Array(dim * dim);
  if (dim === 1) {
    out[0] = 1 / m[0];
  } else if (dim === 2) {
    out[0] = m[3] / det;
    out[1] = -m[1] / det;
    out[2] = -m[2] / det;
    out[3] = m[0] / det;
  } else {
    out[0] = (m[4] * m[8] - m[5] * m[7]) / det;
    out[1] = (m[2] * m[7] - m[1] * m[8]) / det;
    out[2] = (m[1] * m[5] - m[2] * m[4]) / det;
    out[3] = (m[5] * m[6] - m[3] * m[8]) / det;
    out[4] = (m[0] * m[8] - m[2] * m[6]) / det;
    out[5] = (m[2] * m[3] - m[0] * m[5]) / det;
    out[6] = (m[3] * m[7] - m[4] * m[6]) / det;
    out[7] = (m[1] * m[6] - m[0] * m[7]) / det;
    out[8] = (m[0] * m[4] - m[1] * m[3]) / det;
  }
  return out;
}

function dot(a: Float64Array, ra: number, b: Float64Array, rb: number, dim: number): number {
  let s = 0;
  for (let c = 0; c < dim; c++) s += a[ra * dim + c] * b[rb * dim + c];
  return s;
}
