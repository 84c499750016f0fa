// Cache of invariants between runs, so that a re-run with another tolerance or other family options does not
// recompute them. An entry is keyed by a SHA-256 of the block's text; the file is named by the parameters that
// change invariants (PDD depth k, hydrogen policy, tool version), so a change of any of them starts afresh.
// Layout of `<cacheDir>/invariants-k<k>-h<policy>-v<version>.bin`:
//   "PSIC1\n", uint32 (LE) header length, header JSON, zero padding to a multiple of 8,
//   then per entry in header order: PDD rows (nRows*k float64 LE) and weights (nRows float64 LE), then the
//   elements at the rows' centres: nRows+1 part offsets, the parts' atomic numbers and weights (float64 LE).
// Entries written without a composition or elements (an older file) are left out, so they are computed again.
// Values are stored as float64, so a cached run writes exactly the numbers of an uncached one.
import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { CrystalFacts, Pdd } from '../types.js';
import type { RowElements } from '../invariants/pdd.js';
import type { HydrogenPolicy } from './schema.js';
import { writeFilesAtomically } from '../io/outputs.js';

const MAGIC = 'PSIC1\n';

/** Folder of the cache inside a sift output folder, where `sift` and `locate` put it by default. */
export const CACHE_FOLDER = '.polysift-cache';

export interface CacheEntry {
  pdd: Pdd;
  /** Motif points used for the invariants (after the hydrogen policy). */
  atoms: number;
  facts: CrystalFacts | null;
  /** Notes of the periodic-set construction (disorder, hydrogens, merged images). */
  notes: string[];
  /** Symmetry tolerance (Å) the facts were computed with (null in files written before it was stored). */
  symmetryToleranceAngstrom: number | null;
  /** Reduced formula of the compared points (src/geometry/composition.ts). */
  composition: string;
  /** Elements at the centres of the PDD rows (src/invariants/pdd.ts). */
  elements: RowElements;
}

export interface CacheParams {
  k: number;
  hydrogens: HydrogenPolicy;
  version: string;
}

/** Key of one block: SHA-256 of its text (hex). */
export function blockKey(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export function cacheFileName(p: CacheParams): string {
  return `invariants-k${p.k}-h${p.hydrogens}-v${p.version.replace(/[^0-9A-Za-z.]+/g, '_')}.bin`;
}

interface HeaderEntry {
  key: string;
  rows: number;
  atoms: number;
  facts: CrystalFacts | null;
  notes: string[];
  symmetryToleranceAngstrom?: number;
  composition?: string;
  /** Number of (row, element) parts; absent in files written before elements were kept. */
  parts?: number;
}

/** Load the cache for `p` from `dir` (empty when absent; an unreadable file is ignored and reported via `problem`). */
export function loadCache(dir: string, p: CacheParams): { entries: Map<string, CacheEntry>; problem: string | null } {
  const file = join(dir, cacheFileName(p));
  const entries = new Map<string, CacheEntry>();
  if (!existsSync(file)) return { entries, problem: null };
  try {
    const buf = readFileSync(file);
    if (buf.subarray(0, MAGIC.length).toString('latin1') !== MAGIC) throw new Error('not a polysift cache file');
    const headerLength = buf.readUInt32LE(MAGIC.length);
    const headerStart = MAGIC.length + 4;
    const header = JSON.parse(buf.subarray(headerStart, headerStart + headerLength).toString('utf8')) as { k: number; entries: HeaderEntry[] };
    if (header.k !== p.k) throw new Error(`cache holds k = ${header.k}, not ${p.k}`);
    let offset = align8(headerStart + headerLength);
    // Copy into an aligned buffer once, then take views per entry.
    const data = new Float64Array(buf.buffer.slice(buf.byteOffset + offset, buf.byteOffset + buf.length));
    offset = 0;
    for (const h of header.entries) {
      const rows = data.subarray(offset, offset + h.rows * p.k);
      offset += h.rows * p.k;
      const weights = data.subarray(offset, offset + h.rows);
      offset += h.rows;
      if (weights.length !== h.rows) throw new Error('cache file is truncated');
      if (h.parts === undefined || h.composition === undefined) continue;
      const start = Int32Array.from(data.subarray(offset, offset + h.rows + 1));
      offset += h.rows + 1;
      const z = Uint8Array.from(data.subarray(offset, offset + h.parts));
      offset += h.parts;
      const weight = data.subarray(offset, offset + h.parts);
      offset += h.parts;
      if (weight.length !== h.parts) throw new Error('cache file is truncated');
      entries.set(h.key, {
        pdd: { k: p.k, rows, weights }, atoms: h.atoms, facts: h.facts, notes: h.notes, composition: h.composition, elements: { start, z, weight },
        symmetryToleranceAngstrom: h.symmetryToleranceAngstrom ?? null,
      });
    }
    return { entries, problem: null };
  } catch (err) {
    return { entries: new Map(), problem: `ignoring the invariants cache ${file}: ${(err as Error).message}` };
  }
}

/** Write `entries` as the cache for `p` in `dir` (atomically). */
export function saveCache(dir: string, p: CacheParams, entries: Map<string, CacheEntry>): string {
  const header: { k: number; entries: HeaderEntry[] } = { k: p.k, entries: [] };
  let floats = 0;
  for (const [key, e] of entries) {
    if (e.pdd.k !== p.k) throw new Error(`cache entry ${key} has k = ${e.pdd.k}, not ${p.k}`);
    const parts = e.elements.z.length;
    header.entries.push({
      key, rows: e.pdd.weights.length, atoms: e.atoms, facts: e.facts, notes: e.notes, composition: e.composition, parts,
      ...(e.symmetryToleranceAngstrom === null ? {} : { symmetryToleranceAngstrom: e.symmetryToleranceAngstrom }),
    });
    floats += e.pdd.rows.length + e.pdd.weights.length + e.elements.start.length + 2 * parts;
  }
  const headerBytes = Buffer.from(JSON.stringify(header), 'utf8');
  const dataStart = align8(MAGIC.length + 4 + headerBytes.length);
  const out = Buffer.alloc(dataStart + 8 * floats);
  out.write(MAGIC, 0, 'latin1');
  out.writeUInt32LE(headerBytes.length, MAGIC.length);
  headerBytes.copy(out, MAGIC.length + 4);
  const data = new Float64Array(out.buffer, out.byteOffset + dataStart, floats);
  let o = 0;
  for (const e of entries.values()) {
    data.set(e.pdd.rows, o);
    o += e.pdd.rows.length;
    data.set(e.pdd.weights, o);
    o += e.pdd.weights.length;
    data.set(e.elements.start, o);
    o += e.elements.start.length;
    data.set(e.elements.z, o);
    o += e.elements.z.length;
    data.set(e.elements.weight, o);
    o += e.elements.weight.length;
  }
  return writeFilesAtomically(dir, [[cacheFileName(p), out]])[0];
}

function align8(n: number): number {
  return Math.ceil(n / 8) * 8;
}
