// Checks that a PDD can be compared: shape, finite values, weights.
import type { Pdd } from '../types.js';

/** Weights at or above this (negative) value are rounding residue and count as 0; below it they are an error. */
export const NEGATIVE_WEIGHT_TOLERANCE = -1e-9;

/** Throw a clear message when a PDD cannot be compared (shape, non-finite values, negative or zero total weight). */
export function checkPdd(p: Pdd, which = 'a'): void {
  const n = p.weights.length;
  if (!Number.isInteger(p.k) || p.k < 1) throw new Error(`the ${which} PDD has depth k = ${p.k}; k must be a positive integer`);
  if (n < 1) throw new Error(`the ${which} PDD has no rows`);
  if (p.rows.length !== n * p.k) {
    throw new Error(`the ${which} PDD has ${p.rows.length} row values for ${n} weights at k = ${p.k} (expected ${n * p.k})`);
  }
  let total = 0;
  for (let i = 0; i < n; i++) {
    const w = p.weights[i];
    if (!Number.isFinite(w)) throw new Error(`the ${which} PDD has a non-finite weight in row ${i}`);
    if (w < NEGATIVE_WEIGHT_TOLERANCE) throw new Error(`the ${which} PDD has a negative weight ${w} in row ${i}`);
    if (w > 0) total += w;
  }
  if (!(total > 0)) throw new Error(`the ${which} PDD has no positive weight`);
  for (let t = 0; t < p.rows.length; t++) {
    if (!Number.isFinite(p.rows[t])) throw new Error(`the ${which} PDD has a non-finite distance in row ${Math.floor(t / p.k)}`);
  }
}

