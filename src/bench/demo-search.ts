// Benchmark of the demo's mini structure search (src/demo/search): the demo's random starts relaxed under the
// exp-6 plus point-charge potential in worker threads (wall time; a one-thread run of the first 50 starts gives the
// CPU cost per start, which other work on the machine does not inflate), how many starts survived, the spread of repeated minima, and how many distinct structures sift keeps from them.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearch, runMiniSearchInWorkers } from '../demo/search/search.js';
import { DEMO_SEARCH } from '../demo/run-demo.js';
import { sift } from '../landscape/sift.js';

export async function run(): Promise<void> {
  const starts = DEMO_SEARCH.starts;
  const cpu0 = process.cpuUsage();
  const one = runMiniSearch({ seed: DEMO_SEARCH.seed, starts: 50 });
  const cpuPerStart = process.cpuUsage(cpu0).user / 1e6 / 50;
  const r = await runMiniSearchInWorkers({ ...DEMO_SEARCH });
  const iterations = r.structures.map((s) => s.iterations).sort((a, b) => a - b);
  process.stdout.write(
    `mini search: ${starts} starts in ${r.seconds.toFixed(1)} s wall on the default threads; ${(cpuPerStart * 1000).toFixed(0)} ms CPU per start ` +
      `(one thread, first 50: ${one.seconds.toFixed(1)} s); ${r.ids.length} relaxed, ${r.rejected.length} rejected; ` +
      `median ${iterations[iterations.length >> 1]} L-BFGS iterations\n`,
  );
  const reasons = new Map<string, number>();
  for (const x of r.rejected) reasons.set(x.reason, (reasons.get(x.reason) ?? 0) + 1);
  for (const [reason, n] of reasons) process.stdout.write(`  rejected ${n}: ${reason}\n`);
  const e = r.energiesKjPerMol;
  process.stdout.write(
    `  energies ${Math.min(...e).toFixed(2)} .. ${Math.max(...e).toFixed(2)} kJ/mol, densities ` +
      `${Math.min(...r.densitiesGPerCm3).toFixed(3)} .. ${Math.max(...r.densitiesGPerCm3).toFixed(3)} g/cm3\n`,
  );

  const dir = mkdtempSync(join(tmpdir(), 'polysift-bench-search-'));
  try {
    writeFileSync(join(dir, 'search.cif'), r.cif);
    writeFileSync(join(dir, 'energies.csv'), r.energiesCsv);
    const t0 = performance.now();
    const run = await sift({ inputs: [join(dir, 'search.cif')], energiesFile: join(dir, 'energies.csv'), cacheDir: null });
    const l = run.landscape;
    // Spread of repeated minima: energy and EMD of each duplicate to its kept structure.
    const dE: number[] = [];
    const dX: number[] = [];
    for (const s of l.structures)
      if (s.status === 'duplicate') {
        dE.push(Math.abs(s.energy! - l.structures[s.keptIndex!].energy!));
        dX.push(s.distanceToKept!);
      }
    const median = (v: number[]) => (v.length ? v.sort((a, b) => a - b)[v.length >> 1] : NaN);
    process.stdout.write(
      `  sift (${((performance.now() - t0) / 1000).toFixed(1)} s): ${l.counts.kept} kept of ${l.counts.input}, ${l.counts.duplicate} duplicates; ` +
        `duplicate to kept: median ${median(dE).toFixed(4)} kJ/mol (max ${Math.max(...dE).toFixed(4)}), ` +
        `median EMD ${median(dX).toFixed(4)} A (max ${Math.max(...dX).toFixed(4)})\n`,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
