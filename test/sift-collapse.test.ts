// Duplicate collapse rules (issue 4 and DESIGN.md): energy order, nearest kept structure within the
// tolerance, no chaining. Checked on small hand-made distance tables whose answers follow from the rules.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { collapseDuplicates, visitOrder, type CloseEdges } from '../src/landscape/collapse.js';

function edgesFromMatrix(d: number[][], tol: number): CloseEdges {
  const i: number[] = [];
  const j: number[] = [];
  const v: number[] = [];
  for (let a = 0; a < d.length; a++)
    for (let b = a + 1; b < d.length; b++)
      if (d[a][b] <= tol) {
        i.push(a);
        j.push(b);
        v.push(d[a][b]);
      }
  return { i: Int32Array.from(i), j: Int32Array.from(j), d: Float64Array.from(v) };
}

describe('duplicate collapse', () => {
  it('does not chain: a structure near a duplicate but beyond the tolerance of its kept one is kept', () => {
    // Points on a line at 0, 0.8, 1.6 with tolerance 1: 0 keeps, 0.8 joins 0, 1.6 is 1.6 from 0 -> kept.
    const x = [0, 0.8, 1.6];
    const d = x.map((a) => x.map((b) => Math.abs(a - b)));
    const r = collapseDuplicates(3, [0, 1, 2], edgesFromMatrix(d, 1), 1);
    expect(Array.from(r.keptOf)).toEqual([0, 0, 2]);
    expect(r.kept).toEqual([0, 2]);
    expect(Array.from(r.distanceToKept)).toEqual([0, 0.8, 0]);
  });

  it('joins the nearest kept structure, and the lowest energy member is the kept one', () => {
    // Energies order 3, 0, 1, 2; 1 lies 0.5 from 3 and 0.3 from 0, both kept (0 and 3 are 0.9 apart with tolerance 0.6).
    const d = [
      [0, 0.3, 2, 0.9],
      [0.3, 0, 2, 0.5],
      [2, 2, 0, 2],
      [0.9, 0.5, 2, 0],
    ];
    const order = visitOrder([0, 1, 2, 3], [-5, -4, -3, -6]);
    expect(Array.from(order)).toEqual([3, 0, 1, 2]);
    const r = collapseDuplicates(4, order, edgesFromMatrix(d, 0.6), 0.6);
    expect(r.kept).toEqual([3, 0, 2]);
    expect(r.keptOf[1]).toBe(0);
    expect(r.distanceToKept[1]).toBe(0.3);
  });

  it('orders structures without energy after those with one, by input index', () => {
    expect(Array.from(visitOrder([0, 1, 2, 3, 4], [null, 2, null, 1, 2]))).toEqual([3, 1, 4, 0, 2]);
  });

  it('every member is within the tolerance of its kept structure, and kept structures are farther apart (random points)', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.double({ min: 0, max: 5, noNaN: true }), fc.double({ min: 0, max: 5, noNaN: true })), { minLength: 1, maxLength: 30 }), fc.double({ min: 0.1, max: 2, noNaN: true }), (pts, tol) => {
        const d = pts.map((p) => pts.map((q) => Math.hypot(p[0] - q[0], p[1] - q[1])));
        const order = pts.map((_, i) => i);
        const r = collapseDuplicates(pts.length, order, edgesFromMatrix(d, tol), tol);
        for (let s = 0; s < pts.length; s++) {
          expect(d[s][r.keptOf[s]]).toBeLessThanOrEqual(tol);
          // Nearest kept structure visited before s within the tolerance.
          if (r.keptOf[s] !== s) for (const k of r.kept) if (k < s) expect(d[s][r.keptOf[s]]).toBeLessThanOrEqual(d[s][k]);
        }
        for (const a of r.kept) for (const b of r.kept) if (a < b) expect(d[a][b]).toBeGreaterThan(tol);
      }),
      { numRuns: 200 },
    );
  });
});
