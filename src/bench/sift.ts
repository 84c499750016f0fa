// Benchmark of `sift` end to end: 10,000 generated structures (1,000 distinct packings of the invented 11-atom
// molecule in P21/c and P212121, Z = 4, so 44 atoms per cell, each written 10 times in other cells, settings,
// origins, P1 and atom orders with noise) on 2 threads (goal: under 10 s, peak memory under 2 GB), then a
// cached re-run with another duplicate tolerance (goal: under 10% of the first run). Each run is a fresh
// process so its peak memory is its own. The generated input is kept in the system's temporary folder.
import { rmSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';
import { benchLandscape, siftChild } from './_sift-input.js';

const THREADS = 2;

export async function run(): Promise<void> {
  const packings = Number(process.env.POLYSIFT_BENCH_PACKINGS ?? 1000);
  const { dir, cif, energies } = benchLandscape(packings);
  const out = join(dir, 'out');
  const cache = join(dir, 'cache');
  rmSync(cache, { recursive: true, force: true });
  const first = siftChild(cif, energies, out, cache, 0.04, THREADS);
  process.stdout.write(
    `sift of ${first.counts.input} structures (${packings} distinct, 44 atoms per cell), ${THREADS} threads: ${first.seconds.toFixed(2)} s  [goal < 10 s] ` +
      `(CPU ${first.cpuSeconds.toFixed(2)} s over all threads; load average ${loadavg()[0].toFixed(1)} on ${availableParallelism()} cores), peak memory ${first.peakMb.toFixed(0)} MB  [goal < 2048 MB]\n` +
      `  kept ${first.counts.kept} (planted ${packings}), duplicates ${first.counts.duplicate}, rejected ${first.counts.rejected}, families ${first.families}\n` +
      `  stages (s): ${Object.entries(first.timings).map(([k, v]) => `${k} ${v.toFixed(2)}`).join(', ')}\n`,
  );
  const second = siftChild(cif, energies, out, cache, 0.05, THREADS);
  process.stdout.write(
    `cached re-run with tolerance 0.05 Å: ${second.seconds.toFixed(2)} s = ${((100 * second.seconds) / first.seconds).toFixed(1)}% of the first run  [goal < 10%], ` +
      `CPU ${second.cpuSeconds.toFixed(2)} s, cache hits ${second.cache.hits}, misses ${second.cache.misses}, peak memory ${second.peakMb.toFixed(0)} MB\n` +
      `  stages (s): ${Object.entries(second.timings).map(([k, v]) => `${k} ${v.toFixed(2)}`).join(', ')}\n`,
  );
}
