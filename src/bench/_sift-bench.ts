// The sift benchmark, shared by `sift` (10,000 structures) and `sift-100k` (100,000): a landscape shaped like a real
// search (_search-landscape.ts), one end-to-end sift in a fresh process (every stage's wall and CPU time, peak
// memory, work counters), the reference script (scripts/sift_reference.py: numpy, scipy, POT) on the same files in
// the same run with the ratio of the two, one exact EMD against POT's ot.emd2 on the same 1,225 pairs of kept PDDs
// (scripts/emd_timing.py), and a cached re-run with another tolerance. Everything the README's speed table needs.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Papa from 'papaparse';
import { searchLandscape } from './_search-landscape.js';
import { packItems } from '../metric/packed.js';
import { emdItems } from '../metric/emd.js';
import type { Landscape } from '../landscape/schema.js';

const THREADS = 2;

interface ChildResult {
  seconds: number;
  cpuSeconds: number;
  peakMb: number;
  counts: { input: number; kept: number; duplicate: number; rejected: number; outsideWindow: number };
  families: number;
  cache: { hits: number; misses: number; reused: string[] };
  timings: Record<string, number>;
  stageCpu: Record<string, number>;
  counters: Record<string, number>;
}

interface ReferenceResult {
  seconds: Record<string, number>;
  cpuSeconds: Record<string, number>;
  kept: number;
  emds: number;
  keptOf: Record<string, string>;
}

/** Stages that make up "read + invariants + duplicates" in polysift (the reference script's three stages). */
const FRONT = ['read', 'energies', 'periodic sets', 'window', 'invariants', 'duplicates'];

export async function siftBench(packings: number, opts: { goalSeconds: number; goalMb: number; reference: boolean }): Promise<void> {
  const say = (line: string) => process.stdout.write(`${line}\n`);
  const dir = join(tmpdir(), `polysift-bench-search-${packings}`);
  const files = await searchLandscape(dir, packings, availableParallelism(), say);
  if (files.seconds > 0) say(`generated in ${files.seconds.toFixed(0)} s`);
  say(`machine: ${availableParallelism()} cores, load average ${loadavg().map((x) => x.toFixed(1)).join(' ')} (figures taken under load are noisy; CPU times less so)`);

  const work = mkdtempSync(join(tmpdir(), 'polysift-bench-sift-'));
  try {
    const first = child(files.cif, files.energies, join(work, 'out'), '-', 0.04);
    say(
      `polysift sift of ${first.counts.input} structures (${packings} distinct packings), ${THREADS} threads, all stages and every output file (report included):\n` +
        `  ${first.seconds.toFixed(2)} s wall  [goal < ${opts.goalSeconds} s], CPU ${first.cpuSeconds.toFixed(2)} s over all threads, peak memory ${first.peakMb.toFixed(0)} MB  [goal < ${opts.goalMb} MB]\n` +
        `  kept ${first.counts.kept} (planted ${packings}), duplicates ${first.counts.duplicate}, rejected ${first.counts.rejected}, families ${first.families}`,
    );
    say(`  stage                 wall s    CPU s`);
    for (const [name, sec] of Object.entries(first.timings)) say(`  ${name.padEnd(20)} ${sec.toFixed(2).padStart(7)}  ${(first.stageCpu[name] ?? NaN).toFixed(2).padStart(7)}`);
    say(`  work: ${Object.entries(first.counters).map(([k, v]) => `${k} ${v}`).join('; ')}`);
    const front = FRONT.reduce((s, n) => s + (first.timings[n] ?? 0), 0);
    const frontCpu = FRONT.reduce((s, n) => s + (first.stageCpu[n] ?? 0), 0);
    say(`  read + invariants + duplicates (${FRONT.join(', ')}): ${front.toFixed(2)} s wall, ${frontCpu.toFixed(2)} s CPU`);

    if (opts.reference) {
      const ref = reference(files.cif, files.energies, join(work, 'reference.json'));
      const rs = ref.seconds;
      const refFront = rs.read + rs.invariants + rs.duplicates;
      const refCpu = ref.cpuSeconds.read + ref.cpuSeconds.invariants + ref.cpuSeconds.duplicates;
      const agree = agreement(join(work, 'out', 'structures.csv'), ref.keptOf);
      say(
        `reference script (scripts/sift_reference.py: numpy, scipy cKDTree, POT ot.emd2; one thread), same files, same run:\n` +
          `  read ${rs.read.toFixed(2)} s, invariants ${rs.invariants.toFixed(2)} s, duplicates ${rs.duplicates.toFixed(2)} s (${ref.emds} EMDs): ${refFront.toFixed(2)} s wall, ${refCpu.toFixed(2)} s CPU; kept ${ref.kept}\n` +
          `  same kept structure as polysift for ${agree.same} of ${agree.total} structures\n` +
          `  ratio, read + invariants + duplicates: polysift ${(refFront / front).toFixed(1)}x faster by wall  [goal >= 5x], ${(refCpu / frontCpu).toFixed(1)}x by CPU\n` +
          `  ratio, polysift's whole sift (all stages, report) against the script's three stages: ${(refFront / first.seconds).toFixed(1)}x`,
      );
    }

    emdAgainstPot(join(work, 'out', 'landscape.json'), work, say);

    const cache = join(work, 'cache');
    child(files.cif, files.energies, join(work, 'out-cached'), cache, 0.04);
    const second = child(files.cif, files.energies, join(work, 'out-cached'), cache, 0.05);
    say(
      `cached re-run with tolerance 0.05 Å: ${second.seconds.toFixed(2)} s = ${((100 * second.seconds) / first.seconds).toFixed(1)}% of the first run  [goal < 10%], ` +
        `CPU ${second.cpuSeconds.toFixed(2)} s, reused ${second.cache.reused.join(', ') || 'nothing'}, peak memory ${second.peakMb.toFixed(0)} MB\n` +
        `  stages (s): ${Object.entries(second.timings).map(([k, v]) => `${k} ${v.toFixed(2)}`).join(', ')}`,
    );
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

function child(cif: string, energies: string, out: string, cache: string, tolerance: number): ChildResult {
  const script = fileURLToPath(new URL('./_sift-child.js', import.meta.url));
  const r = spawnSync(process.execPath, [script, cif, energies, out, cache, String(tolerance), String(THREADS)], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`sift benchmark child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as ChildResult;
}

function reference(cif: string, energies: string, out: string): ReferenceResult {
  const script = fileURLToPath(new URL('../../scripts/sift_reference.py', import.meta.url));
  const r = spawnSync('python3', [script, cif, energies, out], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.error || r.status !== 0) throw new Error(`the reference script needs python3 with numpy, scipy and POT: ${r.error?.message ?? r.stderr}`);
  return JSON.parse(readFileSync(out, 'utf8')) as ReferenceResult;
}

/** How many structures polysift and the reference assign to the same kept structure. */
function agreement(structuresCsv: string, keptOf: Record<string, string>): { same: number; total: number } {
  const rows = Papa.parse<Record<string, string>>(readFileSync(structuresCsv, 'utf8'), { header: true, skipEmptyLines: true }).data;
  let same = 0;
  for (const r of rows) if ((r.status === 'kept' ? r.id : r.duplicate_of) === keptOf[r.id]) same++;
  return { same, total: rows.length };
}

/** One exact EMD, polysift against POT, on the 1,225 pairs of the 50 lowest-energy kept PDDs of the run. */
function emdAgainstPot(landscapeJson: string, work: string, say: (line: string) => void): void {
  const l = JSON.parse(readFileSync(landscapeJson, 'utf8')) as Landscape;
  const k = l.invariants.k;
  const pdds = l.invariants.kept.slice(0, 50).map((x) => ({ k, rows: Float64Array.from(x.pddRows), weights: Float64Array.from(x.pddWeights) }));
  const pairs: Array<[number, number]> = [];
  for (let a = 0; a < pdds.length; a++) for (let b = a + 1; b < pdds.length; b++) pairs.push([a, b]);
  const set = packItems(pdds.map((pdd) => ({ pdd })), false);
  const ours: number[] = [];
  let best = Infinity;
  for (let rep = 0; rep < 3; rep++) {
    const c0 = process.cpuUsage();
    for (const [a, b] of pairs) {
      const d = emdItems(set, a, set, b, set.columns);
      if (rep === 0) ours.push(d);
    }
    const c = process.cpuUsage(c0);
    best = Math.min(best, (c.user + c.system) / pairs.length);
  }
  const input = join(work, 'pairs.json');
  const output = join(work, 'pot.json');
  writeFileSync(input, JSON.stringify({ k, pdds: pdds.map((p) => ({ rows: Array.from(p.rows), weights: Array.from(p.weights) })), pairs }));
  const script = fileURLToPath(new URL('../../scripts/emd_timing.py', import.meta.url));
  const r = spawnSync('python3', [script, input, output], { encoding: 'utf8' });
  if (r.error || r.status !== 0) throw new Error(`POT timing needs python3 with numpy and POT: ${r.error?.message ?? r.stderr}`);
  const pot = JSON.parse(readFileSync(output, 'utf8')) as { cpuMicroseconds: number; emd: number[] };
  let worst = 0;
  pot.emd.forEach((d, t) => (worst = Math.max(worst, Math.abs(d - ours[t]))));
  const rows = pdds.map((p) => p.weights.length).sort((x, y) => x - y);
  say(
    `one exact EMD on ${pairs.length} pairs of kept PDDs (k = ${k}, rows median ${rows[rows.length >> 1]}, max ${rows[rows.length - 1]}), one thread, CPU time per pair (best of 3):\n` +
      `  polysift ${best.toFixed(1)} µs, POT ot.emd2 + Chebyshev ot.dist ${pot.cpuMicroseconds.toFixed(1)} µs: polysift ${(pot.cpuMicroseconds / best).toFixed(2)}x as fast  [goal >= 1]; largest difference ${worst.toExponential(1)} Å`,
  );
}
