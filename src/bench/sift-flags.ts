// The measurements behind sift's flag thresholds and the auto tolerance (src/landscape/flags.ts,
// src/landscape/auto-tolerance.ts, README "Flags"):
//  1. the demo's relaxed search, and the same search with seed 4 (which leaves a flat minimum: two kept structures
//     at one energy): energies of copies of one minimum against their group's median, kept pairs within the flat
//     window, and how closely distinct kept structures can agree by chance;
//  2. generated landscapes (0.02 kJ/mol energy noise per copy): copies against their group's median, and the
//     energy difference of the distinct close partners (the hard pairs) where they lie within the flat window;
//  3. the auto tolerance against the true gap of each generated landscape and of the demo;
//  4. the element-aware EMD: crystals of other elements on one geometry, an invented twin with N and O exchanged,
//     ring N/C exchanges (how sensitive centre-atom labels are), and its cost in the duplicates stage;
//  5. the pair search's cost at the auto radius (0.08 Å) against a wider one (0.2 Å).
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearchInWorkers, type MiniSearchOptions } from '../demo/search/search.js';
import { DEMO_SEARCH } from '../demo/run-demo.js';
import { generateLandscape, type GeneratorOptions } from '../demo/landscape.js';
import { sift } from '../landscape/sift.js';
import { readCifText } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { cellToBasis } from '../geometry/cell.js';
import { pddWithElements } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import { emd } from '../metric/emd.js';
import { elementEmd } from '../metric/element-emd.js';
import { pairsWithin } from '../metric/graph.js';
import { flatWindowAngstrom } from '../landscape/flags.js';
import type { Landscape } from '../landscape/schema.js';

const out = (s: string) => process.stdout.write(`${s}\n`);

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-bench-flags-'));
  try {
    await demoSearch(dir, 'demo search', DEMO_SEARCH);
    await demoSearch(dir, 'demo search with seed 4', { ...DEMO_SEARCH, seed: 4 });
    await generated(dir);
    elements();
    await pairCost();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

async function siftText(dir: string, name: string, cif: string, energies: string, extra: { elementCheck?: boolean } = {}): Promise<Landscape> {
  writeFileSync(join(dir, `${name}.cif`), cif);
  writeFileSync(join(dir, `${name}.csv`), energies);
  return (await sift({ inputs: [join(dir, `${name}.cif`)], energiesFile: join(dir, `${name}.csv`), cacheDir: null, ...extra })).landscape;
}

/** Largest |energy - group's lower median| over members of duplicate groups. */
function maxOffset(l: Landscape): number {
  return Math.max(0, ...l.structures.filter((r) => r.energyOffset !== null).map((r) => Math.abs(r.energyOffset!)));
}

export async function demoSearch(dir: string, label: string, search: MiniSearchOptions): Promise<void> {
  const found = await runMiniSearchInWorkers(search);
  const l = await siftText(dir, 'demo', found.cif, found.energiesCsv);
  const tc = l.toleranceChoice!;
  const noise = Math.max(...l.structures.filter((r) => r.status === 'duplicate').map((r) => r.distanceToKept!));
  const distinct = Math.min(...l.kept.map((k) => l.structures[k].nearestDistance!));
  out(`${label}: copies within ${noise} Å of their kept structure, kept structures >= ${distinct} Å apart`);
  out(`${label} (${l.counts.input} relaxed starts): auto tolerance ${tc.chosenAngstrom} Å in the gap ${tc.gapLowAngstrom}-${tc.gapHighAngstrom} Å; ${l.counts.kept} kept`);
  const dens = l.structures.filter((r) => r.status === 'duplicate').map((r) => Math.abs(r.densityGPerCm3! - l.structures[r.keptIndex!].densityGPerCm3!));
  out(`  copies of one minimum: energy at most ${maxOffset(l).toFixed(4)} kJ/mol from their group's median, density at most ${Math.max(...dens).toFixed(5)} g/cm3 from the kept one`);
  // Every pair of kept structures: EMD, energy and density differences.
  const pdds = new Map<number, ReturnType<typeof pddWithElements>['pdd']>();
  const blocks = readCifText(found.cif, 'demo.cif');
  for (const k of l.kept) {
    const b = blocks[k];
    if (b.kind === 'record') pdds.set(k, pddWithElements(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100).pdd);
  }
  const window = flatWindowAngstrom(l.parameters.toleranceAngstrom);
  let inWindow = 0;
  let coincidence = { score: Infinity, d: 0, dE: 0, dR: 0 };
  for (let x = 0; x < l.kept.length; x++)
    for (let y = x + 1; y < l.kept.length; y++) {
      const a = l.structures[l.kept[x]];
      const b = l.structures[l.kept[y]];
      const dE = Math.abs(a.energy! - b.energy!);
      const dR = Math.abs(a.densityGPerCm3! - b.densityGPerCm3!);
      const d = emd(pdds.get(a.index)!, pdds.get(b.index)!);
      if (d <= window) {
        inWindow++;
        out(`  kept pair within the flat window (${window} Å): ${a.id} / ${b.id} at ${d.toFixed(4)} Å, ${dE.toFixed(4)} kJ/mol, ${dR.toFixed(5)} g/cm3`);
      } else {
        const score = Math.max(dE / 0.01, dR / 0.002);
        if (score < coincidence.score) coincidence = { score, d, dE, dR };
      }
    }
  out(`  ${inWindow} of ${(l.kept.length * (l.kept.length - 1)) / 2} kept pairs within ${window} Å; beyond it the closest agreement is ${coincidence.dE.toFixed(4)} kJ/mol and ${coincidence.dR.toFixed(5)} g/cm3 (at ${coincidence.d.toFixed(3)} Å)`);
  out(`  flags: ${JSON.stringify(l.flagCounts)}`);
}

const GENERATED: Array<[string, GeneratorOptions]> = [
  ['labelled tests (seed 11)', { seed: 11, packings: 8, copiesPerPacking: 6, closePairs: 2 }],
  ['planted demo (seed 2026)', { seed: 2026, packings: 40, copiesPerPacking: 8, closePairs: 6 }],
  ...([[0.001, 1], [0.002, 2], [0.003, 2], [0.005, 4]] as const).map(
    ([noise, turn]) => [`noise ${noise} Å, turn ${turn} deg`, { seed: 7, packings: 8, copiesPerPacking: 6, closePairs: 3, noiseAngstrom: noise, closeTurnDeg: turn, squeezeMoves: 200 }] as [string, GeneratorOptions],
  ),
];

async function generated(dir: string): Promise<void> {
  out('generated landscapes (energy noise 0.02 kJ/mol per copy):');
  for (const [name, o] of GENERATED) {
    const g = generateLandscape(o);
    const l = await siftText(dir, 'gen', g.cif, g.energiesCsv);
    const blocks = readCifText(g.cif, 'gen.cif');
    const pddOf = (i: number) => {
      const b = blocks[i];
      if (b.kind !== 'record') throw new Error('generated block rejected');
      return pddWithElements(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100).pdd;
    };
    const keptOf = new Map(l.kept.map((k) => [g.truth[k], k]));
    const window = flatWindowAngstrom(l.parameters.toleranceAngstrom);
    const partners = g.closePairs.map(([p, q]) => {
      const [a, b] = [keptOf.get(p)!, keptOf.get(q)!];
      return { d: emd(pddOf(a), pddOf(b)), dE: Math.abs(l.structures[a].energy! - l.structures[b].energy!) };
    });
    const inside = partners.filter((x) => x.d <= window);
    const tc = l.toleranceChoice!;
    out(
      `  ${name}: copies within ${maxOffset(l).toFixed(3)} kJ/mol of their group's median; close partners ${partners.map((x) => x.d.toFixed(3)).join(', ')} Å apart, ` +
        `${inside.length ? `smallest energy difference within ${window.toFixed(3)} Å: ${Math.min(...inside.map((x) => x.dE)).toFixed(4)} kJ/mol` : `none within ${window.toFixed(3)} Å`}; ` +
        `auto ${tc.chosenAngstrom} Å (gap ${tc.gapLowAngstrom}-${tc.gapOpen ? '>=' : ''}${tc.gapHighAngstrom} Å, ${tc.gapDecades?.toFixed(2)} decades); kept ${l.counts.kept} of ${g.packings.length} planted`,
    );
  }
  const noGap = generateLandscape({ seed: 7, packings: 8, copiesPerPacking: 6, closePairs: 3, noiseAngstrom: 0.012, closeTurnDeg: 1, squeezeMoves: 200 });
  const l = await siftText(dir, 'nogap', noGap.cif, noGap.energiesCsv);
  out(`  without a gap (noise 0.012 Å, partners turned 1 deg): ${l.toleranceChoice!.warning}`);

  // Element check cost: the duplicates stage of the planted demo with and without it.
  const planted = generateLandscape(GENERATED[1][1]);
  const withCheck = await siftText(dir, 'planted', planted.cif, planted.energiesCsv);
  const without = await siftText(dir, 'planted', planted.cif, planted.energiesCsv, { elementCheck: false });
  out(
    `  element check on the planted demo (${planted.ids.length} structures): duplicates stage ${withCheck.run.timingsSeconds.duplicates} s with it, ` +
      `${without.run.timingsSeconds.duplicates} s without; same kept structures: ${JSON.stringify(withCheck.kept) === JSON.stringify(without.kept)}`,
  );
}

function elements(): void {
  const dir = join('test', 'data', 'real', 'same-geometry');
  let files: string[] = [];
  try {
    files = readdirSync(dir).filter((f) => f.endsWith('.cif')).sort();
  } catch {
    out(`element-aware EMD: ${dir} not found (run from the repository root)`);
    return;
  }
  const sets = files.map((f) => {
    const b = readCifText(readFileSync(join(dir, f), 'utf8'), f)[0];
    if (b.kind !== 'record') throw new Error(`${f}: ${b.rejected.reason}`);
    return { f, ...pddWithElements(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100) };
  });
  out('element-aware EMD (rows labelled by their centre element) against the plain EMD:');
  for (let a = 0; a < sets.length; a++)
    for (let b = a + 1; b < sets.length; b++) {
      const d = emd(sets[a].pdd, sets[b].pdd);
      if (d <= 0.04) out(`  ${sets[a].f} / ${sets[b].f}: EMD ${d.toFixed(4)} Å, element-aware ${elementEmd(sets[a].pdd, sets[a].elements, sets[b].pdd, sets[b].elements).toFixed(1)} Å`);
    }
  // Invented twins: every N and O exchanged, or one ring N and a bonded C exchanged; and copies with noise.
  for (const seed of [31, 32, 33, 34]) {
    const g = generateLandscape({ seed, packings: 1, copiesPerPacking: 3, closePairs: 0, squeezeMoves: 200, noiseAngstrom: 0.003 });
    const blocks = g.cif.split(/(?=^data_)/m).filter((x) => x.startsWith('data_'));
    const first = blocks[0];
    const rec = readCifText(first, 'x')[0];
    if (rec.kind !== 'record') throw new Error('generated block rejected');
    const basis = cellToBasis(rec.record.cell);
    const cart = (f: number[]) => [0, 1, 2].map((c) => f[0] * basis[c] + f[1] * basis[3 + c] + f[2] * basis[6 + c]);
    let ringPair: [string, string] | null = null;
    for (const x of rec.record.sites)
      for (const y of rec.record.sites) {
        if (ringPair || x.element !== 'N' || y.element !== 'C') continue;
        const [p, q] = [cart(x.frac), cart(y.frac)];
        if (Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]) < 1.45) ringPair = [x.label, y.label];
      }
    const relabel = (f: (label: string, el: string) => string) =>
      first.split('\n').map((line) => line.replace(/^(\S+) ([A-Z][a-z]?) /, (_m, label: string, el: string) => `${label} ${f(label, el)} `)).join('\n');
    const noSwap = relabel((_l, el) => (el === 'N' ? 'O' : el === 'O' ? 'N' : el));
    const ring = relabel((label, el) => (label === ringPair![0] ? 'C' : label === ringPair![1] ? 'N' : el));
    const inv = (text: string) => {
      const r = readCifText(text, 'x')[0];
      if (r.kind !== 'record') throw new Error('relabelled block rejected');
      return pddWithElements(toPeriodicSet(r.record, { hydrogens: 'keep' }).set, 100);
    };
    const [A, B, C] = [inv(first), inv(noSwap), inv(ring)];
    const copies = blocks.slice(1).map(inv);
    out(
      `  orvazinone seed ${seed}: N<->O exchanged ${elementEmd(A.pdd, A.elements, B.pdd, B.elements).toFixed(4)} Å, ring ${ringPair!.join('<->')} exchanged ` +
        `${elementEmd(A.pdd, A.elements, C.pdd, C.elements).toFixed(4)} Å (plain EMD ${emd(A.pdd, C.pdd).toFixed(4)}); copies with 0.003 Å noise: ` +
        `plain ${copies.map((c) => emd(A.pdd, c.pdd).toFixed(4)).join(', ')}, element-aware ${copies.map((c) => elementEmd(A.pdd, A.elements, c.pdd, c.elements).toFixed(4)).join(', ')} Å`,
    );
  }
}

async function pairCost(): Promise<void> {
  const g = generateLandscape(GENERATED[1][1]);
  const items = readCifText(g.cif, 'g.cif').map((b) => {
    if (b.kind !== 'record') throw new Error('generated block rejected');
    const p = pddWithElements(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100).pdd;
    return { pdd: p, amd: amd(p) };
  });
  const line: string[] = [];
  for (const r of [0.08, 0.2]) {
    const cpu = process.cpuUsage();
    const t = performance.now();
    const p = await pairsWithin(items, r, { threads: 2 });
    line.push(`${r} Å: ${((performance.now() - t) / 1000).toFixed(1)} s wall, main-thread CPU ${(process.cpuUsage(cpu).user / 1e6).toFixed(1)} s, ${p.i.length} pairs`);
  }
  out(`pair search on the planted demo (${items.length} structures, 2 threads) within ${line.join('; within ')}`);
}
