// Benchmark of the demo's mini structure search (src/demo/search): 300 random starts relaxed under the exp-6
// potential on one core, wall and CPU time, how many starts survived, the spread of repeated minima, and how many
// distinct structures sift keeps from them.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearch } from '../demo/search/search.js';
import { sift } from '../landscape/sift.js';

export async function run(): Promise<void> {
  const starts = 300;
  const cpu0 = process.cpuUsage();
  const r = runMiniSearch({ seed: 2026, starts });
  const cpuSeconds = process.cpuUsage(cpu0).user / 1e6;
  const iterations = r.structures.map((s) => s.iterations).sort((a, b) => a - b);
  process.stdout.write(
    `mini search: ${starts} starts in ${r.seconds.toFixed(1)} s wall, ${cpuSeconds.toFixed(1)} s CPU (one thread); ` +
      `${r.ids.length} relaxed, ${r.rejected.length} rejected; median ${iterations[iterations.length >> 1]} L-BFGS iterations\n`,
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
