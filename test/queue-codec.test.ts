// Job payloads cross Redis as text (src/parallel/codec.ts). A payload must decode to exactly what was encoded:
// float64 bit for bit (IEEE 754 binary64, the open standard the typed arrays follow), including NaN, the
// infinities and -0 that JSON alone cannot hold, so that a queue run writes the same numbers as a local one.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decodePayload, encodePayload } from '../src/parallel/codec.js';
import { blocksJob } from '../src/landscape/blocks-job.js';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';

const bits = (a: Float64Array) => Array.from(new BigUint64Array(a.buffer, a.byteOffset, a.length));

describe('queue payloads', () => {
  it('give back every float64 bit for bit, in typed arrays and as plain numbers', () => {
    fc.assert(
      fc.property(fc.array(fc.double()), fc.double(), (xs, x) => {
        const a = Float64Array.from(xs);
        const back = decodePayload<{ a: Float64Array; x: number; list: number[] }>(encodePayload({ a, x, list: xs }));
        expect(back.a).toBeInstanceOf(Float64Array);
        expect(bits(back.a)).toEqual(bits(a));
        expect(Object.is(back.x, x)).toBe(true);
        expect(back.list.every((v, i) => Object.is(v, xs[i]))).toBe(true);
      }),
    );
  });

  it('keeps integer typed arrays, views at an offset, nested objects, strings and nulls', () => {
    const buf = new Float64Array([1, 2, 3, 4]);
    const value = { view: buf.subarray(1, 3), i: Int32Array.from([-5, 7]), u: Uint8Array.from([0, 255]), s: 'tab\there "q"', n: null, deep: [{ b: true }] };
    const back = decodePayload<typeof value>(encodePayload(value));
    expect(back).toEqual({ view: Float64Array.from([2, 3]), i: Int32Array.from([-5, 7]), u: Uint8Array.from([0, 255]), s: 'tab\there "q"', n: null, deep: [{ b: true }] });
    expect(() => encodePayload({ m: new Map() })).toThrow(/Map or Set/);
  });

  it('carry a periodic-set and invariants job and its result unchanged', () => {
    const g = generateLandscape({ seed: 3, packings: 2, copiesPerPacking: 2, closePairs: 0 });
    const blocks = readCifText(g.cif, 'g.cif').flatMap((r) => (r.kind === 'record' ? [{ file: 'g.cif', line: r.record.line, text: r.record.text, invariants: true }] : []));
    const input = { blocks, k: 20, hydrogens: 'keep' as const, symmetryToleranceAngstrom: 0.06 };
    const direct = blocksJob(input);
    const viaText = blocksJob(decodePayload(encodePayload(input)));
    const back = decodePayload<typeof direct>(encodePayload(viaText));
    expect(back.sets).toEqual(direct.sets);
    expect(bits(back.invariants.rows)).toEqual(bits(direct.invariants.rows));
    expect(bits(back.invariants.amd)).toEqual(bits(direct.invariants.amd));
    expect(back.invariants.errors).toEqual(blocks.map(() => ''));
  });
});
