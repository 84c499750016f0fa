// The generated landscape the sift benchmarks run on, shaped like a real search of one rigid molecule: distinct
// packings of the invented 11-atom molecule in six common space groups (Z = 2 to 8), energies over about 40
// kJ/mol, each packing found 10 times and written the way search codes write what they find (common practice):
// in its own cell and setting, in other cells, settings and origins, and mostly as noisy P1 cells and noisy
// doubled supercells, so PDDs have 11 to 176 rows (median 44). Packings are made in chunks of 100 on worker
// threads (each chunk its own seed), then every block is shuffled into one input order.
import { createWriteStream, existsSync, mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { generateLandscape, type CopyKind, type GeneratorOptions } from '../demo/landscape.js';
import { mapInWorkers } from '../parallel/pool.js';
import { makeRng } from '../demo/prng.js';

/** Copies 0..9 of every packing: 4 as P1 cells, 3 as doubled P1 supercells relaxed atom by atom, 3 in a symmetric description. */
export const SEARCH_COPY_KINDS: CopyKind[] = [
  'p1',
  'symbol-only',
  'relaxed-supercell',
  'p1',
  'other-cell',
  'relaxed-supercell',
  'p1',
  'other-setting',
  'relaxed-supercell',
  'p1',
];

/** Generator options of one chunk of `packings` packings (close partners included). */
export function searchOptions(seed: number, packings: number, idPrefix: string): GeneratorOptions {
  return {
    seed,
    packings,
    copiesPerPacking: SEARCH_COPY_KINDS.length,
    closePairs: Math.floor(packings / 20),
    spaceGroups: ['P21/c', 'P-1', 'P212121', 'C2/c', 'P21', 'Pbca'],
    copyKinds: SEARCH_COPY_KINDS,
    // Densities come out at 1.1-1.45 g/cm3; 80 kJ/mol per g/cm3 plus 6 kJ/mol of scatter spread energies over about 40.
    energySlopeKjPerMolPerGPerCm3: 80,
    energyScatterKjPerMol: 6,
    squeezeMoves: 150,
    idPrefix,
  };
}

const PACKINGS_PER_CHUNK = 100;

interface ChunkTask {
  seed: number;
  packings: number;
  idPrefix: string;
}

interface ChunkResult {
  blocks: string[];
  energyLines: string[];
}

/** Worker job: one chunk of the landscape, blocks and energy lines in the chunk's order. */
export function searchChunk(task: ChunkTask): ChunkResult {
  const g = generateLandscape(searchOptions(task.seed, task.packings, task.idPrefix));
  const text = g.cif.slice(g.cif.indexOf('\ndata_') + 1);
  const blocks = text.split(/\n(?=data_)/).map((b) => (b.endsWith('\n') ? b : `${b}\n`));
  if (blocks.length !== g.ids.length) throw new Error(`chunk ${task.idPrefix}: ${blocks.length} blocks for ${g.ids.length} ids`);
  return {
    blocks,
    energyLines: g.energiesCsv.trim().split('\n').slice(1),
  };
}

export interface SearchLandscapeFiles {
  cif: string;
  energies: string;
  /** Seconds spent generating (0 when the files were there already). */
  seconds: number;
}

/**
 * Write (once) `dir/search.cif` and `dir/energies.csv` for `packings` distinct packings found 10 times each.
 * Files already there are reused: generating 10,000 packings takes minutes.
 */
export async function searchLandscape(dir: string, packings: number, threads: number, log: (line: string) => void): Promise<SearchLandscapeFiles> {
  const cif = join(dir, 'search.cif');
  const energies = join(dir, 'energies.csv');
  if (existsSync(cif) && existsSync(energies)) return { cif, energies, seconds: 0 };
  mkdirSync(dir, { recursive: true });
  const t0 = performance.now();
  const chunks = Math.ceil(packings / PACKINGS_PER_CHUNK);
  log(`generating ${packings * SEARCH_COPY_KINDS.length} structures (${packings} distinct) in ${chunks} chunks on ${threads} threads (once; kept in ${dir})...`);
  const tasks: ChunkTask[] = Array.from({ length: chunks }, (_, c) => ({
    seed: 9000 + c,
    packings: Math.min(PACKINGS_PER_CHUNK, packings - c * PACKINGS_PER_CHUNK),
    idPrefix: `s${String(c).padStart(3, '0')}`,
  }));
  const url = new URL(import.meta.url.endsWith('.ts') ? './_search-landscape.ts' : './_search-landscape.js', import.meta.url).href;
  const parts = await mapInWorkers<ChunkTask, ChunkResult>(url, 'searchChunk', tasks, { threads });
  // One input order for all blocks: a search writes its minima in the order its runs finish.
  const where: Array<[number, number]> = [];
  parts.forEach((p, c) => p.blocks.forEach((_, b) => where.push([c, b])));
  makeRng(77).shuffle(where);
  const tmp = `${cif}.partial`;
  const out = createWriteStream(tmp);
  out.write(`# Invented search landscape of the 11-atom molecule orvazinone (generated; ${packings} distinct packings)\n`);
  const csv = ['id,energy'];
  for (const [c, b] of where) {
    if (!out.write(parts[c].blocks[b])) await new Promise<void>((r) => out.once('drain', () => r()));
    csv.push(parts[c].energyLines[b]);
  }
  await new Promise<void>((resolve, reject) => out.end((err?: Error | null) => (err ? reject(err) : resolve())));
  writeFileSync(energies, `${csv.join('\n')}\n`);
  renameSync(tmp, cif);
  return { cif, energies, seconds: (performance.now() - t0) / 1000 };
}
