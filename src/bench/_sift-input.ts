// The input of the sift-sized benchmarks, shared: 10,000 generated structures (1,000 distinct packings of the
// invented 11-atom molecule in P21/c and P212121, Z = 4, so 44 atoms per cell, each written 10 times in other
// cells, settings, origins, P1 and atom orders with noise), generated once into the system's temporary folder;
// and one end-to-end sift in a fresh child process (src/bench/_sift-child.ts), which reports its own figures.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';
import { generateLandscape } from '../demo/landscape.js';

export const COPIES = 10;

export interface SiftChildResult {
  seconds: number;
  cpuSeconds: number;
  peakMb: number;
  counts: { input: number; kept: number; duplicate: number; rejected: number; outsideWindow: number };
  families: number;
  cache: { hits: number; misses: number };
  timings: Record<string, number>;
}

/** The benchmark landscape's files (generated on first use); `packings` distinct packings, 10 copies each. */
export function benchLandscape(packings: number): { dir: string; cif: string; energies: string } {
  const dir = join(tmpdir(), `polysift-bench-sift-${packings}x${COPIES}`);
  const cif = join(dir, 'search.cif');
  const energies = join(dir, 'energies.csv');
  if (!existsSync(cif)) {
    const t = performance.now();
    process.stdout.write(`generating ${packings * COPIES} structures (once; kept in ${dir})...\n`);
    mkdirSync(dir, { recursive: true });
    const g = generateLandscape({
      seed: 44,
      packings,
      copiesPerPacking: COPIES,
      closePairs: Math.floor(packings / 20),
      spaceGroups: ['P21/c', 'P212121'],
      supercells: false,
      squeezeMoves: 150,
    });
    writeFileSync(cif, g.cif);
    writeFileSync(energies, g.energiesCsv);
    process.stdout.write(`generated ${g.ids.length} structures in ${((performance.now() - t) / 1000).toFixed(1)} s (kept in ${dir})\n`);
  }
  return { dir, cif, energies };
}

/** One sift of `cif` in a fresh process (so its peak memory is its own). */
export function siftChild(cif: string, energies: string, out: string, cache: string, toleranceAngstrom: number, threads: number): SiftChildResult {
  const script = fileURLToPath(new URL('./_sift-child.js', import.meta.url));
  const r = spawnSync(process.execPath, [script, cif, energies, out, cache, String(toleranceAngstrom), String(threads)], {
    encoding: 'utf8',
    maxBuffer: 1 << 24,
  });
  if (r.status !== 0) throw new Error(`sift benchmark child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as SiftChildResult;
}
