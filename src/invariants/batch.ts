// Invariants (PDD and AMD) of many periodic sets across worker threads.
// Sets travel to the workers in chunks packed into a few flat typed arrays, and the PDDs come back the
// same way, so that one message carries hundreds of structures and structured cloning stays cheap.
import type { Pdd, PeriodicPointSet } from '../types.js';
import { defaultThreads, mapInWorkers, type PoolOptions, type WorkerPool } from '../parallel/pool.js';
import { DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM, pdd } from './pdd.js';
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
}

export interface Invariants {
  pdd: Pdd;
  amd: Float64Array;
}

export interface InvariantsOptions {
  threads?: number;
  /** Called as chunks finish with the number of sets done so far and the total. */
  onProgress?: (done: number, total: number) => void;
  /** PDD row-merging tolerance in Å (see pdd.ts). */
  collapseTolerance?: number;
  /** Sets per message to a worker; by default about 16 chunks per thread, at most 500 sets each. */
  chunkSize?: number;
  /** Worker threads already open (see WorkerPool); default: threads started for this call. */
  pool?: WorkerPool;
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
    pool: opts.pool,
    onProgress: opts.onProgress ? (done, total) => opts.onProgress?.(done === total ? n : Math.min(n, done * chunkSize), n) : undefined,
  };
  const packed = await mapInWorkers<PackedSets, PackedInvariants>(import.meta.url, 'invariantsOfChunk', chunks, pool);
  const out: Array<Invariants | { error: string }> = [];
  for (const p of packed) out.push(...unpackInvariants(p));
  return out;
}

/**
 * Where `computeInvariantsInto` writes: one store of rows, weights and AMDs for many structures (in
 * SharedArrayBuffers when worker threads write into it). Set i gets rows rowAt[i] .. rowAt[i] + asym count - 1
 * (rows it does not fill keep weight 0: a PDD merges equal rows, so it may use fewer) and its AMD at amdAt[i] * k.
 */
export interface InvariantsTarget {
  k: number;
  rows: Float64Array;
  weights: Float64Array;
  amd: Float64Array;
  rowAt: Int32Array;
  amdAt: Int32Array;
}

interface IntoChunk {
  sets: PackedSets;
  target: InvariantsTarget;
  /** Index of the chunk's first set in the target's rowAt/amdAt. */
  first: number;
}

/**
 * PDD and AMD of every set written straight into `target` by the worker threads (no copy of the results passes
 * through messages). Returns, per set, the number of PDD rows written, or the reason it failed.
 */
export async function computeInvariantsInto(
  sets: PeriodicPointSet[],
  target: InvariantsTarget,
  opts: InvariantsOptions = {},
): Promise<Array<number | { error: string }>> {
  const k = target.k;
  if (!(Number.isInteger(k) && k >= 1)) throw new Error(`the PDD depth k must be a positive integer, not ${k}`);
  const n = sets.length;
  if (n === 0) return [];
  const threads = Math.max(1, Math.floor(opts.pool?.threads ?? opts.threads ?? defaultThreads()));
  const chunkSize = Math.max(1, opts.chunkSize ?? Math.min(500, Math.ceil(n / (16 * threads))));
  const tol = opts.collapseTolerance ?? DEFAULT_COLLAPSE_TOLERANCE_ANGSTROM;
  const chunks: IntoChunk[] = [];
  for (let start = 0; start < n; start += chunkSize) chunks.push({ sets: packSets(sets.slice(start, start + chunkSize), k, tol), target, first: start });
  const pool: PoolOptions = {
    threads,
    pool: opts.pool,
    onProgress: opts.onProgress ? (done, total) => opts.onProgress?.(done === total ? n : Math.min(n, done * chunkSize), n) : undefined,
  };
  const parts = await mapInWorkers<IntoChunk, Array<number | { error: string }>>(import.meta.url, 'invariantsIntoChunk', chunks, pool);
  return parts.flat();
}

/** Worker entry of computeInvariantsInto. */
export function invariantsIntoChunk(chunk: IntoChunk): Array<number | { error: string }> {
  const { sets, target, first } = chunk;
  const k = sets.k;
  const out: Array<number | { error: string }> = [];
  for (let i = 0; i < sets.count; i++) {
    const dim = sets.dims[i];
    const set: PeriodicPointSet = {
      dim,
      basis: sets.basis.subarray(9 * i, 9 * i + dim * dim),
      motif: sets.motif.subarray(sets.motifStart[i], sets.motifStart[i + 1]),
      atomicNumbers: new Uint8Array(0),
      asym: sets.asym.subarray(sets.asymStart[i], sets.asymStart[i + 1]),
      multiplicity: sets.multiplicity.subarray(sets.asymStart[i], sets.asymStart[i + 1]),
    };
    try {
      const p = pdd(set, k, { collapseTolerance: sets.collapseTolerance });
      const at = target.rowAt[first + i];
      target.rows.set(p.rows, at * k);
      target.weights.set(p.weights, at);
      target.amd.set(amd(p), target.amdAt[first + i] * k);
      out.push(p.weights.length);
    } catch (err) {
      out.push({ error: err instanceof Error ? err.message : String(err) });
    }
  }
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
  for (let i = 0; i < count; i++) {
    const s = sets[i];
    dims[i] = s.dim;
    basis.set(s.basis.subarray(0, Math.min(9, s.basis.length)), 9 * i);
    motif.set(s.motif, motifStart[i]);
    asym.set(s.asym, asymStart[i]);
    multiplicity.set(s.multiplicity.subarray(0, s.asym.length), asymStart[i]);
  }
  return { k, collapseTolerance, count, dims, basis, motifStart, motif, asymStart, asym, multiplicity };
}

/** Worker entry: invariants of every set of a packed chunk. A failing set is reported, not thrown. */
export function invariantsOfChunk(chunk: PackedSets): PackedInvariants {
  const { k, count } = chunk;
  const pdds: Pdd[] = [];
  const errors: string[] = [];
  const amds = new Float64Array(count * k);
  let totalRows = 0;
  for (let i = 0; i < count; i++) {
    const dim = chunk.dims[i];
    const set: PeriodicPointSet = {
      dim,
      basis: chunk.basis.subarray(9 * i, 9 * i + dim * dim),
      motif: chunk.motif.subarray(chunk.motifStart[i], chunk.motifStart[i + 1]),
      atomicNumbers: new Uint8Array(0),
      asym: chunk.asym.subarray(chunk.asymStart[i], chunk.asymStart[i + 1]),
      multiplicity: chunk.multiplicity.subarray(chunk.asymStart[i], chunk.asymStart[i + 1]),
    };
    try {
      const p = pdd(set, k, { collapseTolerance: chunk.collapseTolerance });
      pdds.push(p);
      amds.set(amd(p), i * k);
      totalRows += p.weights.length;
      errors.push('');
    } catch (err) {
      pdds.push({ k, rows: new Float64Array(0), weights: new Float64Array(0) });
      errors.push(err instanceof Error ? err.message : String(err));
    }
  }
  const rowStart = new Int32Array(count + 1);
  const rows = new Float64Array(totalRows * k);
  const weights = new Float64Array(totalRows);
  for (let i = 0; i < count; i++) {
    const p = pdds[i];
    rows.set(p.rows, rowStart[i] * k);
    weights.set(p.weights, rowStart[i]);
    rowStart[i + 1] = rowStart[i] + p.weights.length;
  }
  return { k, count, rowStart, rows, weights, amd: amds, errors };
}

/**
 * Split a packed chunk into one `{ pdd, amd }` per set. Each set gets its own copies of the arrays, so
 * that sending one PDD on to another thread later does not copy the whole chunk's buffer with it.
 */
export function unpackInvariants(p: PackedInvariants): Array<Invariants | { error: string }> {
  const out: Array<Invariants | { error: string }> = [];
  const k = p.k;
  for (let i = 0; i < p.count; i++) {
    if (p.errors[i] !== '') {
      out.push({ error: p.errors[i] });
      continue;
    }
    const a = p.rowStart[i];
    const b = p.rowStart[i + 1];
    out.push({
      pdd: { k, rows: p.rows.slice(a * k, b * k), weights: p.weights.slice(a, b) },
      amd: p.amd.slice(i * k, (i + 1) * k),
    });
  }
  return out;
}
