// Child process of the sift benchmarks: one end-to-end sift (as the command runs it: read, invariants, collapse,
// neighbours, families, every output file written, report included) in a fresh process, reporting its own time,
// CPU time and peak memory.
// Usage: node dist/bench/_sift-child.js <cif> <energies.csv> <out> <cacheDir|-> <toleranceAngstrom> <threads>
import { performance } from 'node:perf_hooks';
import { sift } from '../landscape/sift.js';
import { siftFiles } from '../landscape/sift-files.js';
import { writeFilesAtomically } from '../io/outputs.js';

const [cif, energies, out, cacheDir, tolerance, threads] = process.argv.slice(2);
const t0 = performance.now();
const cpu0 = process.cpuUsage();
const run = await sift({
  inputs: [cif],
  energiesFile: energies,
  cacheDir: cacheDir === '-' ? null : cacheDir,
  toleranceAngstrom: Number(tolerance),
  threads: Number(threads),
});
const t1 = performance.now();
const c1 = process.cpuUsage();
writeFilesAtomically(out, siftFiles(run));
const seconds = (performance.now() - t0) / 1000;
// CPU time of every thread of the process, for comparison when the machine is shared.
const cpu = process.cpuUsage(cpu0);
const outputs = process.cpuUsage(c1);
process.stdout.write(
  `${JSON.stringify({
    seconds,
    cpuSeconds: (cpu.user + cpu.system) / 1e6,
    // Peak resident set size of this process (worker threads included), kB -> MB.
    peakMb: process.resourceUsage().maxRSS / 1024,
    counts: run.landscape.counts,
    families: run.landscape.families.length,
    cache: { hits: run.cache.hits, misses: run.cache.misses, reused: run.cache.reused },
    timings: { ...run.landscape.run.timingsSeconds, 'files and report': (performance.now() - t1) / 1000 },
    stageCpu: { ...run.cpuSeconds, 'files and report': (outputs.user + outputs.system) / 1e6 },
    counters: run.counters,
  })}\n`,
);
