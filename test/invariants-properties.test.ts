// Property-based checks (fast-check) of the facts PDD and AMD are built on, over random periodic
// sets in 1, 2 and 3 dimensions, measured with the EMD of src/metric/emd.ts:
// - isometry invariance and independence of the cell ("Resolving the data ambiguity for periodic
//   crystals", NeurIPS 2022): unimodular change of basis, supercells, origin shifts, rotations,
//   reflections, atom order, and symmetry operations given versus expanded to P1 give EMD < 1e-9 Å;
// - continuity (same paper): moving every point by at most eps moves the EMD and the AMD distance by
//   at most 2·eps;
// - the AMD lower bound max_j |AMD_j(S) - AMD_j(Q)| <= EMD ("Average minimum distances of periodic
//   point sets", MATCH Commun. Math. Comput. Chem. 2022).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { PeriodicPointSet } from '../src/types.js';
import { pdd } from '../src/invariants/pdd.js';
import { amd } from '../src/invariants/amd.js';
import { amdDistance, emd } from '../src/metric/emd.js';
import {
  asP1,
  changeBasis,
  expandOperations,
  monoclinicBasis,
  moveRigidly,
  P1BAR_OPS,
  P21_OPS,
  P21C_OPS,
  perturb,
  randomBasis,
  randomOrthogonal,
  randomSet,
  randomUnimodular,
  seededRandom,
  shuffleMotif,
  supercell,
} from './helpers/periodic-sets.js';

const RUNS = Number(process.env.POLYSIFT_TEST_RUNS ?? 100);
const dimArb = fc.integer({ min: 1, max: 3 });
const sizeArb = fc.integer({ min: 1, max: 5 });
const kArb = fc.integer({ min: 1, max: 60 });
const seedArb = fc.integer();

function distance(a: PeriodicPointSet, b: PeriodicPointSet, k: number): number {
  return emd(pdd(a, k), pdd(b, k));
}

describe('PDD is an isometry invariant that does not depend on the cell (EMD < 1e-9 Å)', () => {
  it('under a unimodular change of basis', () => {
    fc.assert(
      fc.property(dimArb, sizeArb, kArb, seedArb, (d, m, k, seed) => {
        const rand = seededRandom(seed);
        const s = randomSet(rand, d, m);
        expect(distance(s, changeBasis(s, randomUnimodular(rand, d, 8, 2)), k)).toBeLessThan(1e-9);
      }),
      { numRuns: RUNS },
    );
  });

  it('under supercells', () => {
    fc.assert(
      fc.property(dimArb, sizeArb, kArb, seedArb, (d, m, k, seed) => {
        const rand = seededRandom(seed);
        const s = randomSet(rand, d, m);
        const counts = Array.from({ length: d }, () => 1 + Math.floor(rand() * 3));
        const big = supercell(s, counts);
        expect(distance(s, big, k)).toBeLessThan(1e-9);
        // The same supercell with every point its own asymmetric unit, re-described in a skewed cell.
        expect(distance(s, changeBasis(asP1(big), randomUnimodular(rand, d, 6, 2)), k)).toBeLessThan(1e-9);
      }),
      { numRuns: RUNS },
    );
  });

  it('under origin shifts, rotations and reflections', () => {
    fc.assert(
      fc.property(dimArb, sizeArb, kArb, fc.boolean(), seedArb, (d, m, k, reflect, seed) => {
        const rand = seededRandom(seed);
        const s = randomSet(rand, d, m);
        const q = randomOrthogonal(rand, d, reflect);
        const shift = Array.from({ length: d }, () => 20 * rand() - 10);
        expect(distance(s, moveRigidly(s, q, shift), k)).toBeLessThan(1e-9);
      }),
      { numRuns: RUNS },
    );
  });

  it('under a change of atom order', () => {
    fc.assert(
      fc.property(dimArb, sizeArb, kArb, seedArb, (d, m, k, seed) => {
        const rand = seededRandom(seed);
        const s = randomSet(rand, d, m);
        expect(distance(s, shuffleMotif(s, rand), k)).toBeLessThan(1e-9);
      }),
      { numRuns: RUNS },
    );
  });

  it('with symmetry operations given (asymmetric unit and multiplicities) or expanded to P1 (P-1, P2_1, P2_1/c; International Tables Vol. A)', () => {
    const groups = [P1BAR_OPS, P21_OPS, P21C_OPS];
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 2 }), fc.integer({ min: 1, max: 3 }), fc.boolean(), kArb, seedArb, (g, m, special, k, seed) => {
        const rand = seededRandom(seed);
        // The operations are isometries only in a matching metric: any cell for P-1, a monoclinic cell
        // (alpha = gamma = 90°, unique axis b) for P2_1 and P2_1/c.
        const basis = g === 0 ? randomBasis(rand, 3) : monoclinicBasis(4 + 5 * rand(), 4 + 5 * rand(), 4 + 5 * rand(), 90 + 30 * rand());
        const frac = Array.from({ length: 3 * m }, () => rand());
        // A point on an inversion centre (P-1, P2_1/c) has a smaller orbit: multiplicity below the group order.
        if (special && g !== 1) frac.push(0.5, 0, 0.5);
        const sym = expandOperations(basis, frac, groups[g]);
        const p1 = asP1(sym);
        expect(distance(sym, p1, k)).toBeLessThan(1e-9);
        // And against the P1 description moved, re-celled and re-ordered.
        const other = shuffleMotif(changeBasis(moveRigidly(p1, randomOrthogonal(rand, 3, rand() < 0.5), [1, 2, 3]), randomUnimodular(rand, 3, 6, 2)), rand);
        expect(distance(sym, other, k)).toBeLessThan(1e-9);
      }),
      { numRuns: RUNS },
    );
  });
});

describe('continuity and the AMD lower bound', () => {
  it('moving every point by at most eps changes the EMD and the AMD distance by at most 2·eps', () => {
    // The bound is not vacuous: with two or more points the distances usually move. Not always: when every
    // point's k nearest neighbours are its own translates (k = 1 with far-apart points), the PDD cannot change.
    let movable = 0;
    let changed = 0;
    fc.assert(
      fc.property(dimArb, sizeArb, kArb, fc.double({ min: 1e-4, max: 0.5, noNaN: true }), seedArb, (d, m, k, eps, seed) => {
        const rand = seededRandom(seed);
        const s = randomSet(rand, d, m);
        const moved = perturb(s, eps, rand);
        const a = pdd(s, k);
        const b = pdd(moved, k);
        expect(emd(a, b)).toBeLessThanOrEqual(2 * eps + 1e-12);
        expect(amdDistance(amd(a), amd(b))).toBeLessThanOrEqual(2 * eps + 1e-12);
        if (m >= 2) {
          movable++;
          if (emd(a, b) > 0) changed++;
        }
      }),
      { numRuns: RUNS },
    );
    expect(changed).toBeGreaterThan(movable / 2);
  });

  it('max_j |AMD_j(S) - AMD_j(Q)| <= EMD(PDD(S), PDD(Q)) on random pairs', () => {
    fc.assert(
      fc.property(dimArb, sizeArb, sizeArb, kArb, seedArb, (d, m1, m2, k, seed) => {
        const rand = seededRandom(seed);
        const a = pdd(randomSet(rand, d, m1), k);
        const b = pdd(randomSet(rand, d, m2), k);
        expect(amdDistance(amd(a), amd(b))).toBeLessThanOrEqual(emd(a, b) + 1e-12);
      }),
      { numRuns: RUNS * 3 },
    );
  });
});
