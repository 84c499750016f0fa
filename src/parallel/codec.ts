// Job payloads as text, for the job queue (src/queue): what a worker thread receives by structured cloning has to
// cross Redis as a string. JSON carries the plain parts; typed arrays travel as base64 of their bytes, and the
// numbers JSON cannot hold (NaN, infinities, -0) as tagged strings, so a value decodes to exactly the numbers it
// was encoded from (float64 bit for bit) and a queue run writes the same outputs as a local one.
import { endianness } from 'node:os';

type TypedArrayName =
  | 'Float64Array'
  | 'Float32Array'
  | 'Int32Array'
  | 'Uint32Array'
  | 'Int16Array'
  | 'Uint16Array'
  | 'Int8Array'
  | 'Uint8Array'
  | 'Uint8ClampedArray';

const TYPED: Record<TypedArrayName, new (buffer: ArrayBuffer) => ArrayBufferView> = {
  Float64Array,
  Float32Array,
  Int32Array,
  Uint32Array,
  Int16Array,
  Uint16Array,
  Int8Array,
  Uint8Array,
  Uint8ClampedArray,
};

// Typed arrays are sent as raw bytes; every machine of a run must read them in the same byte order. x86-64 and
// ARM64 machines are little-endian; anything else is refused rather than misread.
if (endianness() !== 'LE') throw new Error('the job queue needs a little-endian machine (x86-64, ARM64)');

/** Encode a job input or result (plain objects, arrays, strings, numbers, booleans, null, typed arrays). */
export function encodePayload(value: unknown): string {
  return JSON.stringify(value, function (this: unknown, _key: string, v: unknown) {
    if (typeof v === 'number') {
      if (Number.isFinite(v)) return Object.is(v, -0) ? { $num: '-0' } : v;
      return { $num: String(v) };
    }
    if (ArrayBuffer.isView(v)) {
      const name = v.constructor.name as TypedArrayName;
      if (!(name in TYPED)) throw new Error(`cannot send a ${v.constructor.name} through the job queue`);
      return { $typed: name, base64: Buffer.from(v.buffer, v.byteOffset, v.byteLength).toString('base64') };
    }
    if (v instanceof Map || v instanceof Set) throw new Error('cannot send a Map or Set through the job queue; use arrays');
    return v;
  });
}

/** Decode what encodePayload wrote. */
export function decodePayload<T>(text: string): T {
  return JSON.parse(text, (_key: string, v: unknown) => {
    if (v === null || typeof v !== 'object' || Array.isArray(v)) return v;
    const o = v as { $num?: string; $typed?: TypedArrayName; base64?: string };
    if (typeof o.$num === 'string') return o.$num === '-0' ? -0 : Number(o.$num);
    if (typeof o.$typed === 'string' && typeof o.base64 === 'string') {
      const Ctor = TYPED[o.$typed];
      if (!Ctor) throw new Error(`unknown typed array ${o.$typed} in a queue payload`);
      const bytes = Buffer.from(o.base64, 'base64');
      // Copy into a fresh buffer: the decoded bytes may sit at an offset no Float64Array can start at.
      const buffer = new ArrayBuffer(bytes.length);
      new Uint8Array(buffer).set(bytes);
      return new Ctor(buffer);
    }
    return v;
  }) as T;
}
