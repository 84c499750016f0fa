// matchOneToOne / hungarian: checked against brute force over every partial one-to-one matching on small cases,
// and the assignment step against scipy.optimize.linear_sum_assignment (SciPy, run live in python3).
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { hungarian, matchOneToOne, type CandidatePairs } from '../src/landscape/matching.js';
import { seededUniform } from '../src/demo/prng.js';

/** Best (most pairs, then least total cost) over every set of disjoint candidate pairs, by exhaustive search. */
function bruteForce(nA: number, nB: number, cost: number[][]): { count: number; total: number } {
  let best = { count: 0, total: 0 };
  const usedB = new Array<boolean>(nB).fill(false);
  const visit = (a: number, count: number, total: number): void => {
    if (a === nA) {
      if (count > best.count || (count === best.count && total < best.total - 1e-12)) best = { count, total };
      return;
    }
    visit(a + 1, count, total); // a stays unmatched
    for (let b = 0; b < nB; b++) {
      if (usedB[b] || !Number.isFinite(cost[a][b])) continue;
      usedB[b] = true;
      visit(a + 1, count + 1, total + cost[a][b]);
      usedB[b] = false;
    }
  };
  visit(0, 0, 0);
  return best;
}

function randomCase(r: () => number, nA: number, nB: number, density: number): { cost: number[][]; pairs: CandidatePairs } {
  const cost: number[][] = [];
  const a: number[] = [];
  const b: number[] = [];
  const c: number[] = [];
  for (let i = 0; i < nA; i++) {
    cost.push([]);
    for (let j = 0; j < nB; j++) {
      if (r() < density) {
        const v = Math.round(r() * 1000) / 10000; // EMD-like values 0–0.1 Å, ties possible
        cost[i].push(v);
        a.push(i); b.push(j); c.push(v);
      } else cost[i].push(Infinity);
    }
  }
  return { cost, pairs: { a: Int32Array.from(a), b: Int32Array.from(b), cost: Float64Array.from(c) } };
}

describe('matchOneToOne', () => {
  it('equals the brute-force optimum (most pairs, then least total EMD) on 600 small random cases', () => {
    const r = seededUniform(2024);
    for (let t = 0; t < 600; t++) {
      const nA = 1 + Math.floor(r() * 6);
      const nB = 1 + Math.floor(r() * 6);
      const { cost, pairs } = randomCase(r, nA, nB, 0.2 + 0.6 * r());
      const got = matchOneToOne(nA, nB, pairs);
      const want = bruteForce(nA, nB, cost);
      expect(got.pairs.length).toBe(want.count);
      expect(Math.abs(got.totalCost - want.total)).toBeLessThan(1e-12);
      // one-to-one, only candidate pairs, partner arrays consistent
      for (const p of got.pairs) {
        expect(cost[p.a][p.b]).toBe(p.cost);
        expect(got.partnerOfA[p.a]).toBe(p.b);
        expect(got.partnerOfB[p.b]).toBe(p.a);
      }
      expect(new Set(got.pairs.map((p) => p.b)).size).toBe(got.pairs.length);
      expect([...got.partnerOfA].filter((x) => x >= 0).length).toBe(want.count);
    }
  });

  it('prefers two pairs over one cheaper pair, and the cheaper of two crossings', () => {
    // A0–B0 0.01 alone would be cheapest, but A0–B1 + A1–B0 matches both.
    const two = matchOneToOne(2, 2, { a: Int32Array.of(0, 0, 1), b: Int32Array.of(0, 1, 0), cost: Float64Array.of(0.01, 0.05, 0.06) });
    expect(two.pairs).toEqual([{ a: 0, b: 1, cost: 0.05 }, { a: 1, b: 0, cost: 0.06 }]);
    const cross = matchOneToOne(2, 2, {
      a: Int32Array.of(0, 0, 1, 1), b: Int32Array.of(0, 1, 0, 1), cost: Float64Array.of(0.02, 0.01, 0.01, 0.03),
    });
    expect(cross.totalCost).toBeCloseTo(0.02, 15);
    expect(cross.pairs.map((p) => [p.a, p.b])).toEqual([[0, 1], [1, 0]]);
  });

  it('leaves structures without candidate pairs unmatched and refuses bad pairs clearly', () => {
    const m = matchOneToOne(3, 2, { a: Int32Array.of(1), b: Int32Array.of(1), cost: Float64Array.of(0.02) });
    expect([...m.partnerOfA]).toEqual([-1, 1, -1]);
    expect([...m.partnerOfB]).toEqual([-1, 1]);
    expect(() => matchOneToOne(1, 1, { a: Int32Array.of(0), b: Int32Array.of(2), cost: Float64Array.of(0) })).toThrow(/outside 1 × 1/);
    expect(() => matchOneToOne(1, 1, { a: Int32Array.of(0), b: Int32Array.of(0), cost: Float64Array.of(NaN) })).toThrow(/finite and non-negative/);
  });
});

describe('hungarian', () => {
  it('finds the same optimal total as scipy.optimize.linear_sum_assignment on random rectangular matrices', () => {
    const r = seededUniform(99);
    const cases: Array<{ rows: number; cols: number; cost: number[] }> = [];
    for (let t = 0; t < 40; t++) {
      const rows = 1 + Math.floor(r() * 12);
      const cols = rows + Math.floor(r() * 5);
      cases.push({ rows, cols, cost: Array.from({ length: rows * cols }, () => r() * 10 - 3) });
    }
    const script = [
      'import json, sys, numpy as np',
      'from scipy.optimize import linear_sum_assignment',
      'out = []',
      'for c in json.load(sys.stdin):',
      '    m = np.array(c["cost"]).reshape(c["rows"], c["cols"])',
      '    r, k = linear_sum_assignment(m)',
      '    out.append(float(m[r, k].sum()))',
      'print(json.dumps(out))',
    ].join('\n');
    const py = spawnSync('python3', ['-c', script], { input: JSON.stringify(cases), encoding: 'utf8' });
    if (py.status !== 0) throw new Error(`python3 with scipy is needed for this check: ${py.stderr || py.error}`);
    const totals = JSON.parse(py.stdout) as number[];
    cases.forEach((c, t) => {
      const assign = hungarian(Float64Array.from(c.cost), c.rows, c.cols);
      expect(new Set(assign).size).toBe(c.rows);
      let total = 0;
      for (let i = 0; i < c.rows; i++) total += c.cost[i * c.cols + assign[i]];
      expect(Math.abs(total - totals[t])).toBeLessThan(1e-9);
    });
  });
});
