// Random PDDs for the metric tests: seeded, so every run checks the same instances.
// A PDD here follows the data contract in src/types.ts: each row ascending, rows in lexicographic order.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Pdd } from '../src/types.js';
import { seededUniform } from '../src/demo/prng.js';

/** The shared seeded uniform stream (mulberry32, common practice), so every data set is reproducible. */
export { seededUniform as rng };

/** Build a PDD from row arrays and weights: sorts each row, then the rows lexicographically (weights follow). */
export function makePdd(rowList: number[][], weights: number[]): Pdd {
  const k = rowList[0].length;
  const idx = rowList.map((r, i) => ({ r: [...r].sort((x, y) => x - y), w: weights[i] }));
  idx.sort((p, q) => {
    for (let t = 0; t < k; t++) if (p.r[t] !== q.r[t]) return p.r[t] - q.r[t];
    return 0;
  });
  const rows = new Float64Array(idx.length * k);
  idx.forEach((e, i) => rows.set(e.r, i * k));
  return { k, rows, weights: Float64Array.from(idx.map((e) => e.w)) };
}

/** n rows of k distances drawn by `value`, weights drawn by `weight` and normalised to add up to 1. */
export function randomPdd(rand: () => number, n: number, k: number, value: () => number, weight: () => number = rand): Pdd {
  const rows: number[][] = [];
  const w: number[] = [];
  for (let i = 0; i < n; i++) {
    rows.push(Array.from({ length: k }, value));
    w.push(weight() + 1e-3);
  }
  const s = w.reduce((x, y) => x + y, 0);
  return makePdd(rows, w.map((x) => x / s));
}

/** AMD as defined in "Average minimum distances of periodic point sets" (MATCH 2022): weighted column means. */
export function amdOf(p: Pdd): Float64Array {
  const n = p.weights.length;
  let total = 0;
  for (let i = 0; i < n; i++) total += p.weights[i];
  const out = new Float64Array(p.k);
  for (let i = 0; i < n; i++) for (let j = 0; j < p.k; j++) out[j] += (p.weights[i] / total) * p.rows[i * p.k + j];
  return out;
}

export function pddToJson(p: Pdd): { k: number; rows: number[]; weights: number[] } {
  return { k: p.k, rows: Array.from(p.rows), weights: Array.from(p.weights) };
}

/** EMDs of many PDD pairs in one python3 call (scripts/emd-reference.py: POT's ot.emd2 with a Chebyshev ot.dist matrix). */
export function potReference(instances: Array<{ a: Pdd; b: Pdd }>): number[] {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-emd-'));
  try {
    const input = join(dir, 'in.json');
    const output = join(dir, 'out.json');
    writeFileSync(input, JSON.stringify({ instances: instances.map(({ a, b }) => ({ k: a.k, a: pddToJson(a), b: pddToJson(b) })) }));
    const script = new URL('../scripts/emd-reference.py', import.meta.url).pathname;
    const run = spawnSync('python3', [script, input, output], { encoding: 'utf8', timeout: 120_000 });
    if (run.error || run.status !== 0) {
      throw new Error(`python3 with POT (pip install POT numpy) is needed for this check: ${run.error?.message ?? run.stderr}`);
    }
    return (JSON.parse(readFileSync(output, 'utf8')) as { emd: number[] }).emd;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
