// Benchmark of the CIF reader: writes a 100,000-block multi-block CIF (44 atoms per block; every other block
// lists P 21/c operations, the rest are P1) to a temp dir, streams it through readStructures, and prints
// blocks/s, MB/s and memory (RSS and heap sampled while reading). Goal: at least 50 MB/s on one core with
// flat memory (issue 2). Both wall-clock and CPU-time rates are printed: on a shared machine the CPU-time rate
// is the one that measures the reader (process.cpuUsage counts every thread of the process, garbage-collector
// helpers and file reads included, so it is if anything an overestimate of one core's work); the load average
// says how shared the machine was. The file is deleted afterwards.
import { createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { once } from 'node:events';
import { readStructures } from '../io/read.js';

const BLOCKS = Number(process.env.POLYSIFT_BENCH_CIF_BLOCKS ?? 100_000);
const ATOMS = 44;
const ELEMENTS = ['C', 'C', 'C', 'C', 'N', 'O', 'H', 'H', 'H', 'H', 'Cl'];

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-bench-cif-'));
  const file = join(dir, 'landscape.cif');
  try {
    const t0 = performance.now();
    await writeLandscape(file, BLOCKS);
    const bytes = statSync(file).size;
    const tWrite = (performance.now() - t0) / 1000;
    process.stdout.write(`wrote ${BLOCKS} blocks, ${(bytes / 1e6).toFixed(1)} MB in ${tWrite.toFixed(1)} s\n`);

    // Memory is sampled every 1000 blocks; the early sample (after 10 %) against the peak shows flatness.
    let peakRss = 0;
    let peakHeap = 0;
    let earlyRss = 0;
    let records = 0;
    let rejected = 0;
    let atoms = 0;
    const t1 = performance.now();
    const cpu0 = process.cpuUsage();
    for await (const r of readStructures([file], { energyItem: 'pred_lattice_energy' })) {
      if (r.kind === 'record') {
        records++;
        atoms += r.record.sites.length;
      } else rejected++;
      const n = records + rejected;
      if (n % 1000 === 0) {
        const m = process.memoryUsage();
        if (m.rss > peakRss) peakRss = m.rss;
        if (m.heapUsed > peakHeap) peakHeap = m.heapUsed;
        if (n === Math.floor(BLOCKS / 10)) earlyRss = m.rss;
      }
    }
    const seconds = (performance.now() - t1) / 1000;
    const cpu = process.cpuUsage(cpu0);
    const cpuSeconds = (cpu.user + cpu.system) / 1e6;
    const load = loadavg()[0]!;
    if (records !== BLOCKS || rejected !== 0 || atoms !== BLOCKS * ATOMS) {
      throw new Error(`reader lost data: ${records} records, ${rejected} rejected, ${atoms} sites (expected ${BLOCKS}, 0, ${BLOCKS * ATOMS})`);
    }
    const mb = bytes / 1e6;
    process.stdout.write(
      `read ${records} blocks (${atoms} sites) in ${seconds.toFixed(2)} s: ${(records / seconds).toFixed(0)} blocks/s, ` +
        `${(mb / seconds).toFixed(1)} MB/s wall clock; CPU time ${cpuSeconds.toFixed(2)} s ` +
        `(user ${(cpu.user / 1e6).toFixed(2)} s, system ${(cpu.system / 1e6).toFixed(2)} s): ${(mb / cpuSeconds).toFixed(1)} MB per CPU-second ` +
        `(goal >= 50 MB/s on one core; the wall-clock figure is lower when other processes share the cores; ` +
        `load average ${load.toFixed(1)} on ${availableParallelism()} cores)\n` +
        `memory: peak RSS ${(peakRss / 2 ** 20).toFixed(0)} MiB (after 10 % of blocks: ${(earlyRss / 2 ** 20).toFixed(0)} MiB), ` +
        `peak heap used ${(peakHeap / 2 ** 20).toFixed(0)} MiB, file ${mb.toFixed(0)} MB\n`,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** An invented landscape: one molecule of 44 atoms in a monoclinic cell, perturbed per block. */
async function writeLandscape(file: string, blocks: number): Promise<void> {
  const out = createWriteStream(file);
  let rng = 12345;
  const rand = (): number => {
    rng = (rng * 1103515245 + 12345) % 2147483648;
    return rng / 2147483648;
  };
  for (let b = 0; b < blocks; b++) {
    const p21c = b % 2 === 0;
    let s =
      `data_cand_${b}\n` +
      `_cell_length_a ${(7 + rand() * 3).toFixed(4)}\n_cell_length_b ${(9 + rand() * 3).toFixed(4)}\n` +
      `_cell_length_c ${(11 + rand() * 3).toFixed(4)}\n_cell_angle_alpha 90\n_cell_angle_beta ${(95 + rand() * 10).toFixed(3)}\n` +
      `_cell_angle_gamma 90\n_pred_lattice_energy ${(-120 + rand() * 20).toFixed(3)}\n`;
    if (p21c) {
      s += `_symmetry_space_group_name_H-M 'P 21/c'\nloop_\n_symmetry_equiv_pos_as_xyz\n'x, y, z'\n'-x, 1/2+y, 1/2-z'\n'-x, -y, -z'\n'x, 1/2-y, 1/2+z'\n`;
    } else {
      s += `_symmetry_space_group_name_H-M 'P 1'\n`;
    }
    s += 'loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n';
    for (let i = 0; i < ATOMS; i++) {
      const el = ELEMENTS[i % ELEMENTS.length]!;
      s += `${el}${i + 1} ${el} ${rand().toFixed(5)} ${rand().toFixed(5)} ${rand().toFixed(5)} 1\n`;
    }
    s += '\n';
    if (!out.write(s)) await once(out, 'drain');
  }
  out.end();
  await once(out, 'finish');
}
