// Benchmark of the invariants stage: PDD time for single P1 cells of 50, 200 and 500 atoms at k = 100
// (goal: under 5 ms for 200 atoms), and the invariants of 10,000 molecular-crystal-like structures of
// 44 atoms per cell (an invented rigid 11-atom molecule, four copies related by the P2_1/c operations)
// at k = 100 via computeInvariants on 2 threads (goal: under 3 s), with the asymmetric unit known and
// with everything given as P1.
import { performance } from 'node:perf_hooks';
import { availableParallelism, loadavg } from 'node:os';
import type { PeriodicPointSet } from '../types.js';
import { pdd } from '../invariants/pdd.js';
import { computeInvariants } from '../invariants/batch.js';
import { seededUniform } from '../demo/prng.js';
import { fracToCart, inverse3, p21cSet, placeMolecule, randomRotation } from './_metric-crystals.js';

const K = 100;

export async function run(): Promise<void> {
  const rand = seededUniform(20261202);
  // On a shared machine wall-clock figures include time spent waiting for a core; the CPU figures
  // (process.cpuUsage, all threads) show the work itself.
  process.stdout.write(`load average over the last minute: ${loadavg()[0].toFixed(1)} on ${availableParallelism()} cores\n`);
  for (const atoms of [50, 200, 500]) {
    const sets = Array.from({ length: 5 }, () => randomP1Cell(rand, atoms));
    pdd(sets[0], K); // warm-up
    const times: number[] = [];
    const cpu: number[] = [];
    for (let rep = 0; rep < 4; rep++) {
      for (const s of sets) {
        const t0 = performance.now();
        const c0 = process.cpuUsage();
        pdd(s, K);
        const c1 = process.cpuUsage(c0);
        times.push(performance.now() - t0);
        cpu.push((c1.user + c1.system) / 1000);
      }
    }
    times.sort((a, b) => a - b);
    cpu.sort((a, b) => a - b);
    const median = times[Math.floor(times.length / 2)];
    process.stdout.write(
      `PDD of a ${atoms}-atom P1 cell, k = ${K}: median ${median.toFixed(2)} ms wall (min ${times[0].toFixed(2)} ms), median ${cpu[Math.floor(cpu.length / 2)].toFixed(2)} ms CPU` +
        (atoms === 200 ? `  [goal < 5 ms]` : '') +
        '\n',
    );
  }

  const n = 10_000;
  const crystals = Array.from({ length: n }, () => molecularCrystal(rand));
  const p1 = crystals.map(asP1);
  for (const [label, sets] of [
    ['P2_1/c, asymmetric unit of 11 points', crystals],
    ['same structures as P1, 44 points queried', p1],
  ] as const) {
    for (const threads of [2, 1]) {
      const t0 = performance.now();
      const c0 = process.cpuUsage();
      const out = await computeInvariants(sets as PeriodicPointSet[], K, { threads });
      const seconds = (performance.now() - t0) / 1000;
      const c1 = process.cpuUsage(c0);
      const cpuSeconds = (c1.user + c1.system) / 1e6;
      let rows = 0;
      for (const r of out) rows += r.pdd.weights.length;
      process.stdout.write(
        `invariants of ${n} structures x 44 atoms, k = ${K}, ${label}, ${threads} thread(s): ${seconds.toFixed(2)} s wall, ${cpuSeconds.toFixed(2)} s CPU (all threads)` +
          ` (${(rows / n).toFixed(1)} PDD rows per structure after merging)` +
          (threads === 2 ? '  [goal < 3 s]' : '') +
          '\n',
      );
    }
  }
}

/** A P1 cell with `atoms` random points at an organic-crystal-like density (about 15 Å³ per atom with hydrogens; common practice). */
export function randomP1Cell(rand: () => number, atoms: number): PeriodicPointSet {
  const volume = 15 * atoms;
  const alpha = rad(80 + 30 * rand());
  const beta = rad(80 + 30 * rand());
  const gamma = rad(80 + 30 * rand());
  const ratios = [0.8 + 0.4 * rand(), 0.8 + 0.4 * rand(), 0.8 + 0.4 * rand()];
  const basis = cellBasis(ratios[0], ratios[1], ratios[2], alpha, beta, gamma);
  const v = Math.abs(det3(basis));
  const s = Math.cbrt(volume / v);
  for (let i = 0; i < 9; i++) basis[i] *= s;
  const frac = new Float64Array(atoms * 3);
  for (let i = 0; i < frac.length; i++) frac[i] = rand();
  return p1Set(basis, fracToCart(basis, frac));
}

/** Invented rigid 11-atom molecule (Cartesian Å): a six-ring with five substituents, loosely planar. */
const MOLECULE = [
  0, 1.39, 0, 1.2, 0.7, 0, 1.2, -0.7, 0, 0, -1.39, 0, -1.2, -0.7, 0, -1.2, 0.7, 0,
  0, 2.8, 0.1, 2.45, 1.4, -0.1, 2.45, -1.4, 0.1, 0, -2.8, -0.1, -2.5, 1.45, 0.2,
];

/** Four copies of the molecule related by the P2_1/c operations (International Tables Vol. A) in a random monoclinic cell. */
export function molecularCrystal(rand: () => number): PeriodicPointSet {
  const a = 6 + 3 * rand();
  const b = 5 + 3 * rand();
  const beta = rad(95 + 20 * rand());
  // Choose c so the cell holds about 14 Å³ per atom (44 atoms), a molecular-crystal-like density (common practice).
  const c = (44 * 14) / (a * b * Math.sin(beta));
  const basis = Float64Array.from([a, 0, 0, 0, b, 0, c * Math.cos(beta), 0, c * Math.sin(beta)]);
  // Random orientation (unit quaternion) and position of the molecule.
  const rot = randomRotation(rand);
  const centre = [rand() * 0.5, rand() * 0.25, rand() * 0.5];
  return p21cSet(basis, placeMolecule(MOLECULE, rot, centre, inverse3(basis)));
}

function asP1(s: PeriodicPointSet): PeriodicPointSet {
  return p1Set(s.basis, s.motif);
}

function p1Set(basis: Float64Array, motif: Float64Array): PeriodicPointSet {
  const m = motif.length / 3;
  return { dim: 3, basis, motif, atomicNumbers: new Uint8Array(m), asym: Int32Array.from({ length: m }, (_, i) => i), multiplicity: new Int32Array(m).fill(1) };
}

function cellBasis(a: number, b: number, c: number, alpha: number, beta: number, gamma: number): Float64Array {
  const cx = c * Math.cos(beta);
  const cy = (c * (Math.cos(alpha) - Math.cos(beta) * Math.cos(gamma))) / Math.sin(gamma);
  const cz = Math.sqrt(Math.max(1e-6, c * c - cx * cx - cy * cy));
  return Float64Array.from([a, 0, 0, b * Math.cos(gamma), b * Math.sin(gamma), 0, cx, cy, cz]);
}

function det3(m: Float64Array): number {
  return m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
}

function rad(deg: number): number {
  return (deg * Math.PI) / 180;
}

