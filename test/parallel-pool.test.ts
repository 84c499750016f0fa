import { describe, expect, it } from 'vitest';
import { chunkRanges, mapInWorkers, startThreadPool } from '../src/parallel/pool.js';

const job = new URL('./fixtures/square.ts', import.meta.url).href;

describe('worker pool', () => {
  it('returns results in input order across two threads', async () => {
    const inputs = Array.from({ length: 37 }, (_, i) => i);
    const out = await mapInWorkers<number, number>(job, 'square', inputs, { threads: 2 });
    expect(out).toEqual(inputs.map((x) => x * x));
  });
  it('gives the same results on the calling thread', async () => {
    const out = await mapInWorkers<number, number>(job, 'square', [3, 4], { threads: 1 });
    expect(out).toEqual([9, 16]);
  });
  it('passes a worker error to the caller', async () => {
    await expect(mapInWorkers<number, number>(job, 'square', [1, -1, 2], { threads: 2 })).rejects.toThrow(/negative input/);
  });
  it('hands each result over as it arrives, with its input position', async () => {
    const seen: Array<[number, number]> = [];
    await mapInWorkers<number, number>(job, 'square', [5, 6, 7], { threads: 2, onResult: (i, r) => seen.push([i, r]) });
    expect(seen.sort((a, b) => a[0] - b[0])).toEqual([[0, 25], [1, 36], [2, 49]]);
  });
  it('keeps threads between calls and replaces one that dies, failing only its call', async () => {
    const pool = startThreadPool(2);
    try {
      expect(await Promise.all([1, 2, 3, 4, 5].map((x) => pool.run<number, number>(job, 'square', x)))).toEqual([1, 4, 9, 16, 25]);
      await expect(pool.run<number, never>(job, 'die', 3)).rejects.toThrow('a worker thread stopped (exit code 3)');
      expect(await Promise.all([6, 7, 8].map((x) => pool.run<number, number>(job, 'square', x)))).toEqual([36, 49, 64]);
    } finally {
      await pool.close();
    }
    await expect(pool.run<number, number>(job, 'square', 2)).rejects.toThrow(/closed/);
  });
  it('splits ranges that cover every item once', () => {
    const r = chunkRanges(10, 3);
    expect(r).toEqual([[0, 3], [3, 6], [6, 10]]);
    expect(chunkRanges(2, 5)).toEqual([[0, 1], [1, 2]]);
  });
});
