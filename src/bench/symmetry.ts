// Benchmark of symmetry detection on the sift benchmark's 10,000 structures of 44 atoms (src/bench/_sift-input.ts:
// P21/c and P212121 packings written in other cells, settings, origins and P1, with noise): CPU time per
// structure on one thread (goal: well under 0.4 ms, so that a 20 s sift on 2 cores loses little to it), its share
// of a full sift of the same structures (goal: under 10%), and spglib on the same atoms at the same tolerance
// from the same run (scripts/symmetry-spglib.py; time measured inside Python, so process start-up is left out).
import { spawnSync } from 'node:child_process';
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';
import { readStructures } from '../io/read.js';
import { expandSites } from '../geometry/periodic-set.js';
import { selectOrderedSites } from '../geometry/disorder.js';
import { detectSymmetry, DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM, type SymmetryCell } from '../geometry/detect-symmetry.js';
import { defaultSetting } from '../geometry/space-group-table.js';
import { benchLandscape, siftChild } from './_sift-input.js';

const THREADS = 2;

export async function run(): Promise<void> {
  const packings = Number(process.env.POLYSIFT_BENCH_PACKINGS ?? 1000);
  const { dir, cif, energies } = benchLandscape(packings);
  const cells: SymmetryCell[] = [];
  for await (const b of readStructures([cif])) {
    if (b.kind !== 'record') continue;
    const ex = expandSites(b.record, selectOrderedSites(b.record.sites).kept);
    cells.push({ basis: ex.basis, frac: ex.frac, types: ex.atomicNumbers });
  }
  const tol = DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM;
  // Warm-up (the compiler and the table of 230 default settings), then every structure once.
  for (const c of cells.slice(0, 300)) detectSymmetry(c, tol);
  const groups = new Map<string, number>();
  const each: number[] = [];
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  for (const c of cells) {
    const t = performance.now();
    const d = detectSymmetry(c, tol);
    each.push(performance.now() - t);
    const name = d.ok ? d.symmetry.symbol : 'not detected';
    groups.set(name, (groups.get(name) ?? 0) + 1);
  }
  const wall = (performance.now() - t0) / 1000;
  const cu = process.cpuUsage(c0);
  const cpu = (cu.user + cu.system) / 1e6;
  each.sort((a, b) => a - b);
  const atoms = cells.reduce((n, c) => n + c.types.length, 0) / cells.length;
  process.stdout.write(
    `symmetry detection of ${cells.length} structures (${atoms.toFixed(0)} atoms per cell on average), tolerance ${tol} Å, 1 thread: ` +
      `${wall.toFixed(2)} s wall, ${cpu.toFixed(2)} s CPU = ${((1000 * cpu) / cells.length).toFixed(3)} ms CPU per structure  [goal well under 0.4 ms]; ` +
      `per structure median ${each[each.length >> 1].toFixed(3)} ms, 99th percentile ${each[Math.floor(0.99 * each.length)].toFixed(3)} ms\n` +
      `  groups found: ${[...groups].sort((a, b) => b[1] - a[1]).map(([g, n]) => `${g} ${n}`).join(', ')}\n`,
  );

  // The full sift of the same structures (fresh cache), whose CPU time detection is part of.
  const cache = join(dir, 'cache-symmetry-bench');
  rmSync(cache, { recursive: true, force: true });
  const whole = siftChild(cif, energies, join(dir, 'out-symmetry-bench'), cache, 0.04, THREADS);
  rmSync(cache, { recursive: true, force: true });
  process.stdout.write(
    `  full sift of the same ${whole.counts.input} structures, ${THREADS} threads: ${whole.seconds.toFixed(2)} s wall, ${whole.cpuSeconds.toFixed(2)} s CPU; ` +
      `detection is ${((100 * cpu) / whole.cpuSeconds).toFixed(1)}% of its CPU time  [goal < 10%]\n`,
  );

  // spglib on the same atoms and tolerance.
  const defaults: Record<number, string> = {};
  for (let n = 1; n <= 230; n++) defaults[n] = defaultSetting(n).hall;
  const job = {
    symprec: tol,
    defaults,
    cells: cells.map((c) => ({
      lattice: [0, 1, 2].map((r) => [c.basis[3 * r], c.basis[3 * r + 1], c.basis[3 * r + 2]]),
      positions: Array.from({ length: c.types.length }, (_, i) => [c.frac[3 * i], c.frac[3 * i + 1], c.frac[3 * i + 2]]),
      numbers: Array.from(c.types),
    })),
  };
  const script = fileURLToPath(new URL('../../scripts/symmetry-spglib.py', import.meta.url));
  const r = spawnSync('/usr/bin/python3', [script], { input: JSON.stringify(job), encoding: 'utf8', maxBuffer: 1 << 30 });
  if (r.status !== 0) {
    process.stdout.write(`  spglib reference not run (Debian's python3-spglib through /usr/bin/python3): ${r.stderr.split('\n').slice(-2).join(' ')}\n`);
    return;
  }
  const ref = JSON.parse(r.stdout) as { seconds: number; results: Array<{ number?: number }> };
  const ours = cells.map((c) => {
    const d = detectSymmetry(c, tol);
    return d.ok ? d.symmetry.number : null;
  });
  const agree = ref.results.filter((x, i) => x.number === ours[i]).length;
  process.stdout.write(
    `  spglib on the same ${cells.length} structures and tolerance: ${ref.seconds.toFixed(2)} s CPU = ` +
      `${((1000 * ref.seconds) / cells.length).toFixed(3)} ms per structure; ours / spglib = ${(cpu / ref.seconds).toFixed(2)}; same group for ${agree} of ${cells.length}\n`,
  );
}
