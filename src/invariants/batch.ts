// Invariants (PDD and AMD) of many periodic sets across worker threads.
// Sets travel to the workers in chunks packed into a few flat typed arrays, and the PDDs come back the
// same way, so that one message carries hundreds of structures and structured cloning stays cheap.
import type { Pdd, PeriodicPointSet } from '../types.js';
import { defaultThreads, mapInWorkers, type PoolOptions } from '../parallel/pool.js';
import { DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM, pdd, pddWithElements, type RowElements } from './pdd.js';
import { amd } from './amd.js';

/** A chunk of periodic sets in flat arrays (structured-cloneable). */
export interface PackedSets {
  k: number;
  collapseTolerance: number;
  count: number;
  dims: Int32Array;
  /** 9 numbers reserved per set; the first dim*dim hold the basis. */
  basis: Float64Array;
  /** count+1 offsets into `motif` (in numbers, not points). */
  motifStart: Int32Array;
  motif: Float64Array;
  /** count+1 offsets into `asym` and `multiplicity`. */
  asymStart: Int32Array;
  asym: Int32Array;
  multiplicity: Int32Array;
  /** Atomic numbers per motif point (same offsets as `motif` divided by the dimension), or empty when a set has none. */
  atomicNumbers: Uint8Array;
  /** count+1 offsets into `atomicNumbers` (a set without atomic numbers has an empty range). */
  atomStart: Int32Array;
}

/** The invariants of a chunk in flat arrays; a set that failed has no rows and its message in `errors`. */
export interface PackedInvariants {
  k: number;
  count: number;
  /** count+1 offsets into the PDD rows (in rows). */
  rowStart: Int32Array;
  /** All PDD rows, row-major, k numbers per row. */
  rows: Float64Array;
  weights: Float64Array;
  /** count*k AMD values. */
  amd: Float64Array;
  /** '' for every set that worked, else why it failed. */
  errors: string[];
  /**
   * Elements at the rows' centres (pdd.ts RowElements), packed: count+1 offsets into `partStart`, where a set
   * with atomic numbers has its rows+1 part offsets (counted from its own first part) and a set without has none.
   */
  elementRowStart: Int32Array;
  partStart: Int32Array;
  partZ: Uint8Array;
  partWeight: Float64Array;
}

export interface Invariants {
  pdd: Pdd;
  amd: Float64Array;
  /** Elements at the centres of the PDD rows, when the set carries atomic numbers. */
  elements?: RowElements;
}

export interface InvariantsOptions {
  threads?: number;
  /** Called as chunks finish with the number of sets done so far and the total. */
  onProgress?: (done: number, total: number) => void;
  /** PDD row-merging tolerance in Å (see pdd.ts). */
  collapseTolerance?: number;
  /** Sets per message to a worker; by default about 16 chunks per thread, at most 500 sets each. */
  chunkSize?: number;
}

/** One or more sets could not be handled; `failures` lists them by position in the input. */
export class InvariantsError extends Error {
  constructor(public readonly failures: Array<{ index: number; message: string }>) {
    super(
      `could not compute invariants for ${failures.length} structure(s): ` +
        failures
          .slice(0, 5)
          .map((f) => `#${f.index}: ${f.message}`)
          .join('; ') +
        (failures.length > 5 ? '; ...' : ''),
    );
    this.name = 'InvariantsError';
  }
}

/** PDD (k neighbours) and AMD of every set, in input order, computed in worker threads. Throws InvariantsError when any set fails. */
export async function computeInvariants(sets: PeriodicPointSet[], k: number, opts: InvariantsOptions = {}): Promise<Invariants[]> {
  const settled = await computeInvariantsSettled(sets, k, opts);
  const failures: Array<{ index: number; message: string }> = [];
  settled.forEach((r, index) => {
    if ('error' in r) failures.push({ index, message: r.error });
  });
  if (failures.length > 0) throw new InvariantsError(failures);
  return settled as Invariants[];
}

/** Like computeInvariants, but a set that fails gives `{ error }` in its place instead of failing the whole call. */
export async function computeInvariantsSettled(
  sets: PeriodicPointSet[],
  k: number,
  opts: InvariantsOptions = {},
): Promise<Array<Invariants | { error: string }>> {
  if (!(Number.isInteger(k) && k >= 1)) throw new Error(`the PDD depth k must be a positive integer, not ${k}`);
  const n = sets.length;
  if (n === 0) return [];
  const threads = Math.max(1, Math.floor(opts.threads ?? defaultThreads()));
  const perThread = 16 * threads;
  const chunkSize = Math.max(1, opts.chunkSize ?? Math.min(500, Math.ceil(n / perThread)));
  const tol = opts.collapseTolerance ?? DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM;
  const chunks: PackedSets[] = [];
  for (let start = 0; start < n; start += chunkSize) chunks.push(packSets(sets.slice(start, start + chunkSize), k, tol));
  const pool: PoolOptions = {
    threads,
    onProgress: opts.onProgress ? (done, total) => opts.onProgress?.(done === total ? n : Math.min(n, done * chunkSize), n) : undefined,
  };
  const packed = await mapInWorkers<PackedSets, PackedInvariants>(import.meta.url, 'invariantsOfChunk', chunks, pool);
  const out: Array<Invariants | { error: string }> = [];
  for (const p of packed) out.push(...unpackInvariants(p));
  return out;
}

/** Pack sets into one chunk message. */
export function packSets(sets: PeriodicPointSet[], k: number, collapseTolerance = DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM): PackedSets {
  const count = sets.length;
  const dims = new Int32Array(count);
  const basis = new Float64Array(9 * count);
  const motifStart = new Int32Array(count + 1);
  const asymStart = new Int32Array(count + 1);
  for (let i = 0; i < count; i++) {
    motifStart[i + 1] = motifStart[i] + sets[i].motif.length;
    asymStart[i + 1] = asymStart[i] + sets[i].asym.length;
  }
  const motif = new Float64Array(motifStart[count]);
  const asym = new Int32Array(asymStart[count]);
  const multiplicity = new Int32Array(asymStart[count]);
  const atomStart = new Int32Array(count + 1);
  for (let i = 0; i < count; i++) {
    const m = sets[i].motif.length / sets[i].dim;
    atomStart[i + 1] = atomStart[i] + (sets[i].atomicNumbers.length === m ? m : 0);
  }
  const atomicNumbers = new Uint8Array(atomStart[count]);
  for (let i = 0; i < count; i++) {
    const s = sets[i];
    if (atomStart[i + 1] > atomStart[i]) atomicNumbers.set(s.atomicNumbers, atomStart[i]);
    dims[i] = s.dim;
    basis.set(s.basis.subarray(0, Math.min(9, s.basis.length)), 9 * i);
    motif.set(s.motif, motifStart[i]);
    asym.set(s.asym, asymStart[i]);
    multiplicity.set(s.multiplicity.subarray(0, s.asym.length), asymStart[i]);
  }
  return { k, collapseTolerance, count, dims, basis, motifStart, motif, asymStart, asym, multiplicity, atomicNumbers, atomStart };
}

/** Worker entry: invariants of every set of a packed chunk. A failing set is reported, not thrown. */
export function invariantsOfChunk(chunk: PackedSets): PackedInvariants {
  const { k, count } = chunk;
  const out: Array<Invariants | { error: string }> = [];
  for (let i = 0; i < count; i++) {
    const dim = chunk.dims[i];
    const set: PeriodicPointSet = {
      dim,
      basis: chunk.basis.subarray(9 * i, 9 * i + dim * dim),
      motif: chunk.motif.subarray(chunk.motifStart[i], chunk.motifStart[i + 1]),
      atomicNumbers: chunk.atomicNumbers.subarray(chunk.atomStart[i], chunk.atomStart[i + 1]),
      asym: chunk.asym.subarray(chunk.asymStart[i], chunk.asymStart[i + 1]),
      multiplicity: chunk.multiplicity.subarray(chunk.asymStart[i], chunk.asymStart[i + 1]),
    };
    out.push(invariantsOrError(set, k, chunk.collapseTolerance));
  }
  return packInvariants(k, out);
}

/** PDD and AMD of one set, or why they could not be computed. */
export function invariantsOrError(set: PeriodicPointSet, k: number, collapseTolerance = DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM): Invariants | { error: string } {
  try {
    // Sets carrying atomic numbers also give the elements at their rows' centres (the element-aware check).
    if (set.atomicNumbers.length > 0) {
      const w = pddWithElements(set, k, { collapseTolerance });
      return { pdd: w.pdd, amd: amd(w.pdd), elements: w.elements };
    }
    const p = pdd(set, k, { collapseTolerance });
    return { pdd: p, amd: amd(p) };
  } catch (err) {
    return { error: err instanceof Error ? err.message : String(err) };
  }
}

/** Pack per-set invariants (or errors) into one message: a few flat arrays instead of two per set. */
export function packInvariants(k: number, results: ReadonlyArray<Invariants | { error: string }>): PackedInvariants {
  const count = results.length;
  const rowStart = new Int32Array(count + 1);
  for (let i = 0; i < count; i++) {
    const r = results[i];
    rowStart[i + 1] = rowStart[i] + ('error' in r ? 0 : r.pdd.weights.length);
  }
  const rows = new Float64Array(rowStart[count] * k);
  const weights = new Float64Array(rowStart[count]);
  const amds = new Float64Array(count * k);
  const errors: string[] = [];
  for (let i = 0; i < count; i++) {
    const r = results[i];
    if ('error' in r) {
      errors.push(r.error);
      continue;
    }
    errors.push('');
    rows.set(r.pdd.rows, rowStart[i] * k);
    weights.set(r.pdd.weights, rowStart[i]);
    amds.set(r.amd, i * k);
  }
  // Elements: per set with them, rows+1 part offsets (relative to the set's first part), then the parts.
  const elements = results.map((r) => ('error' in r ? null : (r.elements ?? null)));
  const elementRowStart = new Int32Array(count + 1);
  let parts = 0;
  for (let i = 0; i < count; i++) {
    const e = elements[i];
    elementRowStart[i + 1] = elementRowStart[i] + (e ? e.start.length : 0);
    if (e) parts += e.z.length;
  }
  const partStart = new Int32Array(elementRowStart[count]);
  const partZ = new Uint8Array(parts);
  const partWeight = new Float64Array(parts);
  let at = 0;
  for (let i = 0; i < count; i++) {
    const e = elements[i];
    if (!e) continue;
    partStart.set(e.start, elementRowStart[i]);
    partZ.set(e.z, at);
    partWeight.set(e.weight, at);
    at += e.z.length;
  }
  return { k, count, rowStart, rows, weights, amd: amds, errors, elementRowStart, partStart, partZ, partWeight };
}

/**
 * Split a packed chunk into one `{ pdd, amd }` per set. Each set gets its own copies of the arrays, so
 * that sending one PDD on to another thread later does not copy the whole chunk's buffer with it.
 */
export function unpackInvariants(p: PackedInvariants): Array<Invariants | { error: string }> {
  const out: Array<Invariants | { error: string }> = [];
  const k = p.k;
  let part = 0;
  for (let i = 0; i < p.count; i++) {
    const e0 = p.elementRowStart[i];
    const e1 = p.elementRowStart[i + 1];
    let elements: RowElements | undefined;
    if (e1 > e0) {
      const start = p.partStart.slice(e0, e1);
      const parts = start[start.length - 1];
      elements = { start, z: p.partZ.slice(part, part + parts), weight: p.partWeight.slice(part, part + parts) };
      part += parts;
    }
    if (p.errors[i] !== '') {
      out.push({ error: p.errors[i] });
      continue;
    }
    const a = p.rowStart[i];
    const b = p.rowStart[i + 1];
    const inv: Invariants = {
      pdd: { k, rows: p.rows.slice(a * k, b * k), weights: p.weights.slice(a, b) },
      amd: p.amd.slice(i * k, (i + 1) * k),
    };
    if (elements) inv.elements = elements;
    out.push(inv);
  }
  return out;
}
