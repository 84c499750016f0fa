// Exact k nearest neighbours of motif points in an infinite periodic point set (1, 2 or 3 dimensions).
//
// For a query point q the candidates are all points p + n·B (p a motif point, n an integer vector,
// B the reduced basis), q itself excluded and its own translates included.
//
// Stopping rule (why the result is exact). Write a candidate's offset from q in reduced fractional
// coordinates as x = g + n with g = frac(p) - frac(q), so the Cartesian offset is v = x·B. Since
// x = v·B⁻¹, |x_i| = |v · c_i| <= |v|·|c_i|, where c_i is column i of B⁻¹ and 1/|c_i| = h_i is the
// width of the cell across the other basis vectors. So every candidate within distance R of q has
// |g_i + n_i| <= R / h_i on every axis i: enumerating, for every motif point, the n_i in those
// ranges visits every candidate within R (and some farther ones). The k smallest distances seen are
// exact as soon as the k-th of them is <= R, because every candidate not visited is farther than R.
// When that fails, the search repeats for that query with R set to the k-th distance seen (k real
// candidates lie within it, so the second pass always succeeds) or, with fewer than k candidates
// seen, with R doubled.
//
// The basis is LLL-reduced first (src/geometry/reduce.ts) so that the ranges stay small for any
// input cell; reduction does not change the lattice, so it changes only the running time.
import type { PeriodicSet } from '../types.js';
import { inverse, reduceBasis } from '../geometry/reduce.js';

/** Everything the search needs about a set, prepared once: padded to 3D, reduced, motif wrapped. */
export interface PreparedSet {
  /** Original dimension (1, 2 or 3). */
  dim: number;
  m: number;
  /** 3x3 reduced basis (padded with unit vectors for dim < 3), rows are lattice vectors. */
  basis: Float64Array;
  /** Cell widths h_i across the other basis vectors (Infinity on padded axes). */
  widths: Float64Array;
  /** m*3 fractional coordinates in the reduced basis, wrapped to [0, 1). */
  frac: Float64Array;
  /** m*3 Cartesian coordinates of the wrapped points. */
  cart: Float64Array;
  /** Cell volume (length, area or volume for dim 1, 2, 3). */
  volume: number;
}

export interface NeighbourOptions {
  /** Starting search radius in Å; by default estimated from the point density. Exposed for tests of the stopping rule. */
  initialRadiusAngstrom?: number;
}

/** Reduce the basis and wrap the motif into the reduced cell. Throws with a clear message on unusable input. */
export function prepareSet(set: PeriodicSet): PreparedSet {
  const dim = set.dim;
  if (!(dim === 1 || dim === 2 || dim === 3)) throw new Error(`a periodic set must have dimension 1, 2 or 3, not ${dim}`);
  const m = set.motif.length / dim;
  if (!Number.isInteger(m) || m < 1) throw new Error(`a periodic set needs at least one motif point (motif has ${set.motif.length} numbers for dimension ${dim})`);
  for (let i = 0; i < set.motif.length; i++) {
    if (!Number.isFinite(set.motif[i])) throw new Error(`motif point ${Math.floor(i / dim)} has a coordinate that is not a finite number`);
  }
  const red = reduceBasis(set.basis, dim);
  // Pad to 3D: extra axes are unit vectors orthogonal to the set, never translated along.
  const basis = new Float64Array(9);
  for (let r = 0; r < 3; r++) {
    for (let c = 0; c < 3; c++) basis[r * 3 + c] = r < dim && c < dim ? red.basis[r * dim + c] : r === c ? 1 : 0;
  }
  const inv = inverse(basis, 3);
  const widths = new Float64Array(3);
  for (let i = 0; i < 3; i++) {
    const cx = inv[0 * 3 + i];
    const cy = inv[1 * 3 + i];
    const cz = inv[2 * 3 + i];
    widths[i] = i < dim ? 1 / Math.sqrt(cx * cx + cy * cy + cz * cz) : Infinity;
  }
  const frac = new Float64Array(m * 3);
  const cart = new Float64Array(m * 3);
  for (let p = 0; p < m; p++) {
    const x = set.motif[p * dim];
    const y = dim > 1 ? set.motif[p * dim + 1] : 0;
    const z = dim > 2 ? set.motif[p * dim + 2] : 0;
    for (let i = 0; i < 3; i++) {
      let f = x * inv[0 * 3 + i] + y * inv[1 * 3 + i] + z * inv[2 * 3 + i];
      if (i < dim) {
        f -= Math.floor(f);
        if (f >= 1) f = 0; // floor rounding for tiny negative values
      } else {
        f = 0;
      }
      frac[p * 3 + i] = f;
    }
    for (let c = 0; c < 3; c++) {
      cart[p * 3 + c] = frac[p * 3] * basis[c] + frac[p * 3 + 1] * basis[3 + c] + frac[p * 3 + 2] * basis[6 + c];
    }
  }
  const det = basis[0] * (basis[4] * basis[8] - basis[5] * basis[7]) - basis[1] * (basis[3] * basis[8] - basis[5] * basis[6]) + basis[2] * (basis[3] * basis[7] - basis[4] * basis[6]);
  const volume = Math.abs(det);
  return { dim, m, basis, widths, frac, cart, volume };
}

/** Volume of the unit ball in dimension 1, 2, 3. */
const UNIT_BALL = [0, 2, Math.PI, (4 * Math.PI) / 3];

/**
 * Distances (Å) from each query motif point to its k nearest neighbours in the infinite periodic set,
 * ascending, as a queries.length*k row-major array. `queries` are motif indices (default: all points).
 */
export function nearestNeighbourDistances(
  set: PeriodicSet | PreparedSet,
  k: number,
  queries?: Int32Array,
  options: NeighbourOptions = {},
): Float64Array {
  if (!(Number.isInteger(k) && k >= 1)) throw new Error(`the number of neighbours k must be a positive integer, not ${k}`);
  const prep = 'widths' in set ? set : prepareSet(set);
  const m = prep.m;
  let qs = queries;
  if (!qs) {
    qs = new Int32Array(m);
    for (let i = 0; i < m; i++) qs[i] = i;
  }
  for (let i = 0; i < qs.length; i++) {
    if (!(qs[i] >= 0 && qs[i] < m)) throw new Error(`query index ${qs[i]} is outside the motif (0..${m - 1})`);
  }
  // Radius whose ball holds about k+1 points at this density, with a margin so one pass usually suffices.
  const estimate = 1.15 * Math.pow(((k + 1) * prep.volume) / (m * UNIT_BALL[prep.dim]), 1 / prep.dim);
  const r0 = options.initialRadiusAngstrom ?? estimate;
  if (!(r0 > 0)) throw new Error('the initial search radius must be positive');

  const out = new Float64Array(qs.length * k);
  const heap = new Float64Array(k);
  for (let qi = 0; qi < qs.length; qi++) {
    const q = qs[qi];
    let radius = r0;
    for (;;) {
      const count = searchOne(prep, q, k, radius, heap);
      if (count === k && heap[0] <= radius * radius) break;
      // (the factor keeps sqrt-then-square rounding from stopping the second pass short)
      radius = count === k ? Math.sqrt(heap[0]) * (1 + 1e-9) : radius * 2;
    }
    // heap holds the k smallest squared distances; sort them ascending into the output row.
    const row = out.subarray(qi * k, qi * k + k);
    row.set(heap);
    row.sort();
    for (let j = 0; j < k; j++) row[j] = Math.sqrt(row[j]);
  }
  return out;
}

/**
 * Visit every candidate whose fractional offset lies in the box that contains the ball of `radius`
 * around motif point q, keeping the k smallest squared distances in a max-heap. Returns how many
 * candidates the heap holds (k unless fewer were visited).
 */
function searchOne(prep: PreparedSet, q: number, k: number, radius: number, heap: Float64Array): number {
  const { basis: b, widths, frac, cart, m } = prep;
  // Slightly widen the ranges so that rounding never drops a candidate at distance exactly `radius`.
  const rho0 = (radius / widths[0]) * (1 + 1e-12) + 1e-12;
  const rho1 = (radius / widths[1]) * (1 + 1e-12) + 1e-12;
  const rho2 = (radius / widths[2]) * (1 + 1e-12) + 1e-12;
  const b00 = b[0], b01 = b[1], b02 = b[2];
  const b10 = b[3], b11 = b[4], b12 = b[5];
  const b20 = b[6], b21 = b[7], b22 = b[8];
  const fq0 = frac[q * 3], fq1 = frac[q * 3 + 1], fq2 = frac[q * 3 + 2];
  const cq0 = cart[q * 3], cq1 = cart[q * 3 + 1], cq2 = cart[q * 3 + 2];
  let count = 0;
  for (let p = 0; p < m; p++) {
    const g0 = frac[p * 3] - fq0;
    const g1 = frac[p * 3 + 1] - fq1;
    const g2 = frac[p * 3 + 2] - fq2;
    const lo0 = Math.ceil(-rho0 - g0), hi0 = Math.floor(rho0 - g0);
    const lo1 = Math.ceil(-rho1 - g1), hi1 = Math.floor(rho1 - g1);
    const lo2 = Math.ceil(-rho2 - g2), hi2 = Math.floor(rho2 - g2);
    const d0 = cart[p * 3] - cq0;
    const d1 = cart[p * 3 + 1] - cq1;
    const d2 = cart[p * 3 + 2] - cq2;
    for (let n0 = lo0; n0 <= hi0; n0++) {
      const x0 = d0 + n0 * b00, x1 = d1 + n0 * b01, x2 = d2 + n0 * b02;
      for (let n1 = lo1; n1 <= hi1; n1++) {
        const y0 = x0 + n1 * b10, y1 = x1 + n1 * b11, y2 = x2 + n1 * b12;
        for (let n2 = lo2; n2 <= hi2; n2++) {
          if (p === q && n0 === 0 && n1 === 0 && n2 === 0) continue; // the query point itself
          const v0 = y0 + n2 * b20, v1 = y1 + n2 * b21, v2 = y2 + n2 * b22;
          const dsq = v0 * v0 + v1 * v1 + v2 * v2;
          if (count < k) {
            heapPush(heap, count, dsq);
            count++;
          } else if (dsq < heap[0]) {
            heapReplaceTop(heap, k, dsq);
          }
        }
      }
    }
  }
  return count;
}

/** Insert into a max-heap holding `size` items. */
function heapPush(heap: Float64Array, size: number, value: number): void {
  let i = size;
  while (i > 0) {
    const parent = (i - 1) >> 1;
    if (heap[parent] >= value) break;
    heap[i] = heap[parent];
    i = parent;
  }
  heap[i] = value;
}

/** Replace the largest item of a full max-heap and restore the heap order. */
function heapReplaceTop(heap: Float64Array, size: number, value: number): void {
  let i = 0;
  for (;;) {
    const l = 2 * i + 1;
    if (l >= size) break;
    const r = l + 1;
    const c = r < size && heap[r] > heap[l] ? r : l;
    if (heap[c] <= value) break;
    heap[i] = heap[c];
    i = c;
  }
  heap[i] = value;
}
