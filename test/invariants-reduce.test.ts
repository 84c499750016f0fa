// Checks of LLL reduction (Lenstra, Lenstra & Lovász, "Factoring polynomials with rational
// coefficients", Math. Ann. 1982): the defining conditions of a reduced basis, the same lattice, and
// the paper's bound on the first vector, on random skewed bases in 1, 2 and 3 dimensions.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { determinant, gramSchmidt, LLL_DELTA, reduceBasis } from '../src/geometry/reduce.js';
import { randomBasis, randomUnimodular, seededRandom } from './helpers/periodic-sets.js';

function multiply(u: ArrayLike<number>, b: ArrayLike<number>, d: number): Float64Array {
  const out = new Float64Array(d * d);
  for (let r = 0; r < d; r++) for (let c = 0; c < d; c++) for (let t = 0; t < d; t++) out[r * d + c] += u[r * d + t] * b[t * d + c];
  return out;
}

/** Shortest nonzero lattice vector length by enumerating a block of integer combinations. */
function shortestByEnumeration(b: Float64Array, d: number, n: number): number {
  let best = Infinity;
  const idx = new Array<number>(d).fill(-n);
  for (;;) {
    if (idx.some((x) => x !== 0)) {
      let s = 0;
      for (let c = 0; c < d; c++) {
        let v = 0;
        for (let r = 0; r < d; r++) v += idx[r] * b[r * d + c];
        s += v * v;
      }
      best = Math.min(best, Math.sqrt(s));
    }
    let r = 0;
    while (r < d && idx[r] === n) idx[r++] = -n;
    if (r === d) break;
    idx[r]++;
  }
  return best;
}

describe('LLL basis reduction', () => {
  it('returns a size-reduced, Lovász-reduced basis of the same lattice (LLL, Math. Ann. 1982, conditions (1.4) and (1.5))', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 3 }), fc.integer(), (d, seed) => {
        const rand = seededRandom(seed);
        const good = randomBasis(rand, d);
        const skew = randomUnimodular(rand, d, 12, 3);
        const input = multiply(skew, good, d);
        const red = reduceBasis(input, d);
        // Same lattice: reduced = U * input with U integer and det U = +-1.
        expect(Math.abs(determinant(red.transform, d))).toBe(1);
        const again = multiply(red.transform, input, d);
        for (let i = 0; i < d * d; i++) expect(Math.abs(again[i] - red.basis[i])).toBeLessThan(1e-8 * (1 + Math.abs(red.basis[i])));
        const mu = new Float64Array(d * d);
        const bs = new Float64Array(d * d);
        const bsq = new Float64Array(d);
        gramSchmidt(red.basis, d, mu, bs, bsq);
        for (let i = 1; i < d; i++) {
          for (let j = 0; j < i; j++) expect(Math.abs(mu[i * d + j])).toBeLessThanOrEqual(0.5 + 1e-9);
          expect(bsq[i]).toBeGreaterThanOrEqual((LLL_DELTA - mu[i * d + i - 1] ** 2) * bsq[i - 1] * (1 - 1e-9));
        }
        // The first vector is within (1/(delta - 1/4))^((d-1)/2) of the shortest (LLL 1982, Prop. 1.6 with general delta).
        const lambda1 = shortestByEnumeration(red.basis, d, 3);
        const b1 = Math.sqrt(bsq[0]);
        expect(b1).toBeLessThanOrEqual(Math.pow(1 / (LLL_DELTA - 0.25), (d - 1) / 2) * lambda1 * (1 + 1e-9));
      }),
      { numRuns: 200 },
    );
  });

  it('turns a skewed description of the cubic lattice Z^3 into vectors of length 1 (shortest vectors of Z^3, OEIS A005875 term 1 = 6)', () => {
    // With delta = 0.99 this is forced: |b1|^2 <= 1/0.74^2 < 2 leaves only norm 1, and size reduction plus
    // the Lovász condition rule out a second or third vector of norm 2 or more (integer norms).
    const rand = seededRandom(7);
    for (let trial = 0; trial < 50; trial++) {
      const u = randomUnimodular(rand, 3, 15, 3);
      const red = reduceBasis(Float64Array.from(u), 3);
      for (let r = 0; r < 3; r++) {
        const len = Math.hypot(red.basis[r * 3], red.basis[r * 3 + 1], red.basis[r * 3 + 2]);
        expect(len).toBeCloseTo(1, 12);
      }
    }
  });

  it('rejects a degenerate basis with a clear message', () => {
    expect(() => reduceBasis([1, 0, 0, 2, 0, 0, 0, 0, 1], 3)).toThrow(/degenerate/);
    expect(() => reduceBasis([1, Number.NaN, 0, 1], 2)).toThrow(/finite/);
    expect(() => reduceBasis([1, 0], 2)).toThrow(/needs 4 numbers/);
  });
});
