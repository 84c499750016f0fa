import { describe, expect, it } from 'vitest';
import { chunkRanges, mapInWorkers } from '../src/parallel/pool.js';

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
  it('splits ranges that cover every item once', () => {
    const r = chunkRanges(10, 3);
    expect(r).toEqual([[0, 3], [3, 6], [6, 10]]);
    expect(chunkRanges(2, 5)).toEqual([[0, 1], [1, 2]]);
  });
});
