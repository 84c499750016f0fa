// Metric map: classical scaling (Torgerson, Psychometrika 1952) refined by SMACOF (de Leeuw 1977;
// Borg & Groenen, Modern Multidimensional Scaling, 2005), with Kruskal's stress-1 (Psychometrika
// 1964) and trustworthiness (Venna & Kaski, ICANN 2001). References run live once for this file
// through scripts/embedding_reference.py: scikit-learn's `sklearn.manifold.trustworthiness`,
// numpy's `eigvalsh` for the classical-scaling eigenvalues, scipy's `pdist` for stress-1.
import { beforeAll, describe, expect, it } from 'vitest';
import { classicalMds, embed2d, jacobiEigen, rawStress, smacof } from '../src/cluster/embedding.js';
import { trustworthiness } from '../src/cluster/trustworthiness.js';
import { embed2dLandmarks } from '../src/cluster/embedding-landmarks.js';
import { blobs, distanceMatrix, rng, runPythonReference, type Points } from './fixtures/cluster-data.js';

interface RefOutput {
  cases: Array<{ trustworthiness: number[]; eigenvalues: number[]; stress1: number }>;
}

const flat = (coords: Array<[number, number]>) => Float64Array.from(coords.flat());

// truly 2-D points: a distance matrix from plane coordinates
const plane: Points = (() => {
  const rand = rng(3);
  const n = 150;
  const x = new Float64Array(2 * n);
  for (let i = 0; i < 2 * n; i++) x[i] = (rand() * 2 - 1) * 10;
  return { n, dim: 2, x };
})();
const planeDist = distanceMatrix(plane, 'euclidean');
// not 2-D: 5-D blobs under L-infinity and under Euclidean distances
const five = blobs(17, 5, [[0, 0, 0, 0, 0], [4, 4, 0, 0, 1], [0, 5, 5, 1, 0]], [50, 40, 30], [0.8, 1.2, 0.5], 20, 8);
const fiveLinf = distanceMatrix(five, 'chebyshev');
const fiveEuc = distanceMatrix(five, 'euclidean');

const planeMap = embed2d(planeDist, plane.n);
const linfMap = embed2d(fiveLinf, five.n);
const eucMap = embed2d(fiveEuc, five.n);
const ks = [5, 10, 20];

let ref: RefOutput;
beforeAll(() => {
  ref = runPythonReference<RefOutput>('embedding_reference.py', {
    cases: [
      { n: plane.n, dist: Array.from(planeDist), coords: Array.from(flat(planeMap.coords)), ks },
      { n: five.n, dist: Array.from(fiveLinf), coords: Array.from(flat(linfMap.coords)), ks },
      { n: five.n, dist: Array.from(fiveEuc), coords: Array.from(flat(eucMap.coords)), ks },
    ],
  });
});

describe('metric map of points that truly are 2-D', () => {
  it('has stress ~0 and recovers every distance (so the picture is the original up to rotation/reflection)', () => {
    const stress = planeMap.quality.find((q) => q.name === 'Kruskal stress-1');
    expect(stress?.value).toBeLessThan(1e-9);
    const x = flat(planeMap.coords);
    let worst = 0;
    for (let i = 0; i < plane.n; i++) {
      for (let j = i + 1; j < plane.n; j++) {
        const d = Math.hypot(x[2 * i] - x[2 * j], x[2 * i + 1] - x[2 * j + 1]);
        worst = Math.max(worst, Math.abs(d - planeDist[i * plane.n + j]));
      }
    }
    expect(worst).toBeLessThan(1e-8);
    expect(ref.cases[0].stress1).toBeLessThan(1e-9);
  });

  it('has trustworthiness 1, as sklearn.manifold.trustworthiness says', () => {
    expect(planeMap.quality.find((q) => q.name === 'trustworthiness@10')?.value).toBeCloseTo(1, 12);
    ref.cases[0].trustworthiness.forEach((t) => expect(t).toBeCloseTo(1, 12));
  });
});

describe('metric map of a metric that is not 2-D', () => {
  it('reports trustworthiness equal to sklearn.manifold.trustworthiness(metric="precomputed") to 1e-9', () => {
    [linfMap, eucMap].forEach((map, c) => {
      const x = flat(map.coords);
      ks.forEach((k, t) => {
        const ours = trustworthiness(c === 0 ? fiveLinf : fiveEuc, five.n, x, k);
        expect(Math.abs(ours - ref.cases[c + 1].trustworthiness[t]), `case ${c}, k=${k}`).toBeLessThan(1e-9);
      });
      // a real check: the picture is good but not perfect
      expect(ref.cases[c + 1].trustworthiness[1]).toBeLessThan(1);
      expect(ref.cases[c + 1].trustworthiness[1]).toBeGreaterThan(0.8);
      const reported = map.quality.find((q) => q.name === 'trustworthiness@10');
      expect(Math.abs((reported?.value ?? NaN) - ref.cases[c + 1].trustworthiness[1])).toBeLessThan(1e-9);
    });
  });

  it('reports Kruskal stress-1 as computed by scipy pdist from the same coordinates', () => {
    [linfMap, eucMap].forEach((map, c) => {
      const s = map.quality.find((q) => q.name === 'Kruskal stress-1')?.value ?? NaN;
      expect(Math.abs(s - ref.cases[c + 1].stress1)).toBeLessThan(1e-12);
      expect(s).toBeGreaterThan(0.01);
    });
  });

  it('starts from classical scaling with the eigenvalues numpy.linalg.eigvalsh finds', () => {
    [fiveLinf, fiveEuc].forEach((dist, c) => {
      const x = classicalMds(dist, five.n);
      // |column c|^2 of the classical solution is its eigenvalue
      for (let a = 0; a < 2; a++) {
        let s = 0;
        for (let i = 0; i < five.n; i++) s += x[2 * i + a] * x[2 * i + a];
        const expected = ref.cases[c + 1].eigenvalues[a];
        expect(Math.abs(s - expected) / expected, `case ${c}, axis ${a}`).toBeLessThan(1e-9);
      }
    });
  });

  it('SMACOF never raises the raw stress of its start (Borg & Groenen 2005, ch. 8) and lowers it here', () => {
    const init = classicalMds(fiveLinf, five.n);
    const before = rawStress(fiveLinf, five.n, init);
    let last = before;
    for (const iters of [1, 2, 5, 20, 100]) {
      const r = smacof(fiveLinf, five.n, init, { maxIterations: iters, relativeTolerance: 0 });
      expect(r.rawStress).toBeLessThanOrEqual(last * (1 + 1e-12));
      last = r.rawStress;
    }
    expect(last).toBeLessThan(before * 0.99);
  });
});

describe('metric map edge cases', () => {
  it('handles n = 0, 1, 2 and 3', () => {
    expect(embed2d(new Float64Array(0), 0).coords).toEqual([]);
    expect(embed2d(new Float64Array(1), 1).coords).toEqual([[0, 0]]);
    const two = embed2d(Float64Array.from([0, 3, 3, 0]), 2).coords;
    expect(Math.hypot(two[0][0] - two[1][0], two[0][1] - two[1][1])).toBeCloseTo(3, 12);
    // a 3-4-5 right triangle is exactly 2-D
    const tri = embed2d(Float64Array.from([0, 3, 4, 3, 0, 5, 4, 5, 0]), 3);
    const d = (a: number, b: number) => Math.hypot(tri.coords[a][0] - tri.coords[b][0], tri.coords[a][1] - tri.coords[b][1]);
    expect(d(0, 1)).toBeCloseTo(3, 10);
    expect(d(0, 2)).toBeCloseTo(4, 10);
    expect(d(1, 2)).toBeCloseTo(5, 10);
  });

  it('puts exact duplicates on one spot and stays finite', () => {
    const pts: Points = { n: 8, dim: 2, x: Float64Array.from([0, 0, 0, 0, 0, 0, 3, 1, 3, 1, -2, 5, 7, 7, 7, 7]) };
    const map = embed2d(distanceMatrix(pts, 'euclidean'), pts.n);
    for (const [x, y] of map.coords) expect(Number.isFinite(x) && Number.isFinite(y)).toBe(true);
    expect(map.coords[1]).toEqual(map.coords[0]);
    expect(map.coords[4]).toEqual(map.coords[3]);
    expect(map.quality[0].value).toBeLessThan(1e-9);
    // all points on one spot
    const same = embed2d(new Float64Array(16), 4);
    expect(same.coords.every(([x, y]) => x === 0 && y === 0)).toBe(true);
  });

  it('is deterministic', () => {
    expect(embed2d(fiveLinf, five.n)).toEqual(linfMap);
  });

  it('refuses bad matrices with a clear message', () => {
    expect(() => embed2d(new Float64Array(3), 2)).toThrow(/expected 2\*2/);
    expect(() => embed2d(Float64Array.from([0, NaN, NaN, 0]), 2)).toThrow(/finite and >= 0/);
    expect(() => trustworthiness(planeDist, plane.n, flat(planeMap.coords), 75)).toThrow(/n\/2/);
  });

  it('solves a small symmetric eigenproblem (Jacobi) with A v = lambda v', () => {
    const a = Float64Array.from([4, 1, -2, 2, 1, 2, 0, 1, -2, 0, 3, -2, 2, 1, -2, -1]);
    const { values, vectors } = jacobiEigen(a, 4);
    for (let c = 0; c < 4; c++) {
      for (let i = 0; i < 4; i++) {
        let av = 0;
        for (let j = 0; j < 4; j++) av += a[i * 4 + j] * vectors[j * 4 + c];
        expect(av).toBeCloseTo(values[c] * vectors[i * 4 + c], 12);
      }
    }
    // trace is preserved
    expect(values.reduce((s, v) => s + v, 0)).toBeCloseTo(4 + 2 + 3 - 1, 12);
  });
});

describe('landmark metric map (de Silva & Tenenbaum, "Sparse multidimensional scaling using landmark points", 2004)', () => {
  const big: Points = (() => {
    const rand = rng(29);
    const n = 600;
    const x = new Float64Array(2 * n);
    for (let i = 0; i < 2 * n; i++) x[i] = (rand() * 2 - 1) * 20;
    return { n, dim: 2, x };
  })();
  const euclid = (i: number, j: number) => Math.hypot(big.x[2 * i] - big.x[2 * j], big.x[2 * i + 1] - big.x[2 * j + 1]);

  it('recovers every distance of truly 2-D points from L*n distances (triangulation is exact for Euclidean data)', () => {
    const map = embed2dLandmarks(big.n, euclid, { landmarks: 40 });
    expect(map.landmarks.length).toBe(40);
    expect(map.distanceEvaluations).toBeLessThanOrEqual(40 * big.n);
    const x = flat(map.coords);
    let worst = 0;
    for (let i = 0; i < big.n; i++) {
      for (let j = i + 1; j < big.n; j++) worst = Math.max(worst, Math.abs(Math.hypot(x[2 * i] - x[2 * j], x[2 * i + 1] - x[2 * j + 1]) - euclid(i, j)));
    }
    expect(worst).toBeLessThan(1e-7);
    expect(map.quality[0].value).toBeLessThan(1e-9);
  });

  it('chooses landmarks by the max-min rule: the second is the point farthest from point 0', () => {
    const map = embed2dLandmarks(big.n, euclid, { landmarks: 10 });
    let far = 0;
    for (let j = 1; j < big.n; j++) if (euclid(0, j) > euclid(0, far)) far = j;
    expect(map.landmarks[0]).toBe(0);
    expect(map.landmarks[1]).toBe(far);
  });

  it('is the full method when n is at most the landmark count', () => {
    const small = embed2dLandmarks(five.n, (i, j) => fiveLinf[i * five.n + j], { landmarks: 500 });
    expect(small.coords).toEqual(linfMap.coords);
  });

  it('stops choosing landmarks when every point sits on one, and places duplicates on it', () => {
    const base = [[0, 0], [4, 0], [0, 3], [5, 5]];
    const n = 40;
    const d = (i: number, j: number) => Math.hypot(base[i % 4][0] - base[j % 4][0], base[i % 4][1] - base[j % 4][1]);
    const map = embed2dLandmarks(n, d, { landmarks: 10 });
    expect(map.landmarks.length).toBe(4);
    for (let i = 0; i < n; i++) expect(map.coords[i]).toEqual(map.coords[i % 4]);
    expect(Math.hypot(map.coords[0][0] - map.coords[1][0], map.coords[0][1] - map.coords[1][1])).toBeCloseTo(4, 9);
  });

  it('refuses a bad distance with a clear message', () => {
    expect(() => embed2dLandmarks(50, () => NaN, { landmarks: 5 })).toThrow(/finite and >= 0/);
  });
});
