// Typed arrays over shared memory beyond what Node 20's structured clone can describe (a view's length and offset
// are written in 32 bits; past 4 GiB the message does not arrive at all) cannot go to a worker thread as they are.
// A 100,000-structure run keeps its PDDs in one such store, so messages carry views over buffers larger than 2 GiB
// as plain descriptions (the SharedArrayBuffer itself travels whole) and the worker rebuilds them; smaller ones
// travel as they are.

const LIMIT = 2 ** 31;

interface ViewDescription {
  polysiftView: string;
  buffer: SharedArrayBuffer;
  byteOffset: number;
  length: number;
}

type Ctor = new (buffer: SharedArrayBuffer, byteOffset: number, length: number) => ArrayBufferView;
const CTORS: Record<string, Ctor> = {
  Float64Array: Float64Array as unknown as Ctor,
  Float32Array: Float32Array as unknown as Ctor,
  Int32Array: Int32Array as unknown as Ctor,
  Uint32Array: Uint32Array as unknown as Ctor,
  Uint8Array: Uint8Array as unknown as Ctor,
};

/** A copy of `value` in which every large shared typed array is replaced by its description (plain data is shared). */
export function describeLargeViews(value: unknown): unknown {
  if (ArrayBuffer.isView(value)) {
    const v = value as ArrayBufferView & { length: number };
    if (v.buffer instanceof SharedArrayBuffer && v.buffer.byteLength > LIMIT && CTORS[v.constructor.name]) {
      const d: ViewDescription = { polysiftView: v.constructor.name, buffer: v.buffer, byteOffset: v.byteOffset, length: v.length };
      return d;
    }
    return value;
  }
  if (Array.isArray(value)) return value.map(describeLargeViews);
  if (value !== null && typeof value === 'object' && Object.getPrototypeOf(value) === Object.prototype) {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) out[k] = describeLargeViews(v);
    return out;
  }
  return value;
}

/** The inverse of describeLargeViews, in place where it can be. */
export function restoreLargeViews(value: unknown): unknown {
  if (value !== null && typeof value === 'object' && !ArrayBuffer.isView(value)) {
    const d = value as Partial<ViewDescription>;
    if (typeof d.polysiftView === 'string' && d.buffer instanceof SharedArrayBuffer) return new CTORS[d.polysiftView](d.buffer, d.byteOffset!, d.length!);
    if (Array.isArray(value)) return value.map(restoreLargeViews);
    const o = value as Record<string, unknown>;
    for (const k of Object.keys(o)) o[k] = restoreLargeViews(o[k]);
  }
  return value;
}
