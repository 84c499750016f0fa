// Figures behind locate's found criterion and its scale-free comparison (README, "How locate decides found").
// Two landscapes of the invented molecule: the demo's mini search (300 relaxed random starts, dense like a real
// landscape) and the planted generator (40 packings, 6 close partners, sparse). For every kept structure X, versions
// as an experiment would give them (src/bench/_experimental-variants.ts: cell stretched with the molecules rigid,
// uniformly by 0.5-3% per axis or unevenly, bonds to hydrogen shortened by 0.1 Å as X-ray data have them) are
// located in the landscape:
// - present: with X in the landscape; the right answer is "found as X";
// - absent: the same reference with X taken out (its two nearest other kept structures); the right answer is
//   "not found", except where X has a twin, another kept structure within twice the duplicate tolerance, which is
//   the same minimum for practical purposes (counted apart).
// Printed: the comparison distances with and without the scale removed, how well the uniform scale is recovered,
// what a 1D search for the best scale would add, and how many references each criterion gets right.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearch } from '../demo/search/search.js';
import { generateLandscape } from '../demo/landscape.js';
import { sift } from '../landscape/sift.js';
import { siftFiles } from '../landscape/sift-files.js';
import { writeFilesAtomically } from '../io/outputs.js';
import { readCifText } from '../io/read.js';
import { referenceInvariants } from '../landscape/references.js';
import { locateReferences, type LocateScale } from '../landscape/locate.js';
import { keptWithPolicy } from '../landscape/kept-comparison.js';
import { decideFound, DEFAULT_FOUND_CRITERION, type FoundCriterion } from '../landscape/found-criterion.js';
import { emd } from '../metric/emd.js';
import { experimentalVariant, type VariantOptions } from './_experimental-variants.js';
import type { HydrogenPolicy, Landscape } from '../landscape/schema.js';
import type { CrystalRecord, Pdd } from '../types.js';

/** The experimental-like versions located, by name. */
export const VARIANTS: ReadonlyArray<[string, Omit<VariantOptions, 'id'>]> = [
  ['stretch 0.5%', { stretch: [1.005, 1.005, 1.005] }],
  ['stretch 1%', { stretch: [1.01, 1.01, 1.01] }],
  ['stretch 2%', { stretch: [1.02, 1.02, 1.02] }],
  ['stretch 3%', { stretch: [1.03, 1.03, 1.03] }],
  ['uneven 1.5/0.2/0.8%', { stretch: [1.015, 1.002, 1.008] }],
  ['uneven 2.5/0/1%', { stretch: [1.025, 1, 1.01] }],
  ['X-H -0.1 Å', { shortenHydrogenBondsAngstrom: 0.1 }],
  ['X-H -0.1 Å, stretch 1%', { stretch: [1.01, 1.01, 1.01], shortenHydrogenBondsAngstrom: 0.1 }],
  ['X-H -0.1 Å, stretch 2%', { stretch: [1.02, 1.02, 1.02], shortenHydrogenBondsAngstrom: 0.1 }],
];

/** One located reference: the kept structure it came from and the distances of its nearest kept structures. */
interface Located {
  variant: string;
  /** Structure index of X. */
  own: number;
  /** X has a twin (another kept structure within twice the duplicate tolerance). */
  twin: boolean;
  /** X's close partner is kept (planted landscape). */
  partner: boolean;
  /** Comparison distances (Å) and structure indices of the three nearest kept structures. */
  hits: Array<{ index: number; distance: number; emd: number; scale: number | null }>;
}

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-locate-threshold-'));
  try {
    const search = runMiniSearch({ seed: 2026, starts: 300 });
    const planted = generateLandscape({ seed: 2026, packings: 40, copiesPerPacking: 8, closePairs: 6 });
    const sets = [
      { name: 'demo search (300 starts)', data: await siftInto(join(dir, 'search'), search.cif, search.energiesCsv, () => -1, []) },
      {
        name: 'planted (40 packings, 6 close partners)',
        data: await siftInto(join(dir, 'planted'), planted.cif, planted.energiesCsv, (id) => planted.truth[planted.ids.indexOf(id)], planted.closePairs),
      },
    ];
    process.stdout.write(
      `criterion: tolerance ${DEFAULT_FOUND_CRITERION.toleranceAngstrom} Å, gap limit ${DEFAULT_FOUND_CRITERION.gapLimitAngstrom} Å, ` +
        `gap ratio ${DEFAULT_FOUND_CRITERION.gapRatio}; k = 100\n`,
    );
    for (const { name, data } of sets) {
      for (const hydrogens of ['keep', 'drop'] as const) {
        const byScale = new Map<LocateScale, Located[]>();
        for (const scale of ['volume', 'none'] as const) byScale.set(scale, await locateAll(data, hydrogens, scale));
        const twins = byScale.get('volume')!.filter((l) => l.twin).length / VARIANTS.length;
        process.stdout.write(`\n${name}: ${data.landscape.kept.length} kept (${twins} with a twin), hydrogens ${hydrogens}\n`);
        report(byScale);
      }
      await bestScaleGain(data);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

interface Sifted {
  landscape: Landscape;
  path: string;
  records: CrystalRecord[];
  /** Structure index of X's close partner (a packing with the molecule turned by a few degrees) when it is kept. */
  partnerOf: Map<number, number>;
}

/** Sift a generated run; `packingOf(id)` and `closePairs` give the planted truth (packing numbers), when there is one. */
async function siftInto(
  out: string, cif: string, energiesCsv: string, packingOf: (id: string) => number, closePairs: ReadonlyArray<readonly [number, number]>,
): Promise<Sifted> {
  const inputs = writeFilesAtomically(out, [['run.cif', cif], ['energies.csv', energiesCsv]]);
  const run = await sift({ inputs: [inputs[0]], energiesFile: inputs[1], cacheDir: null });
  writeFilesAtomically(out, siftFiles(run, { report: false }));
  const records = run.keptTexts.map((t) => {
    const b = readCifText(t, 'kept.cif')[0];
    if (b.kind !== 'record') throw new Error(b.rejected.reason);
    return b.record;
  });
  const keptOfPacking = new Map(run.landscape.kept.map((i) => [packingOf(run.landscape.structures[i].id), i] as const));
  const partnerOf = new Map<number, number>();
  for (const [a, b] of closePairs) {
    const ka = keptOfPacking.get(a);
    const kb = keptOfPacking.get(b);
    if (ka !== undefined && kb !== undefined) {
      partnerOf.set(ka, kb);
      partnerOf.set(kb, ka);
    }
  }
  return { landscape: run.landscape, path: join(out, 'landscape.json'), records, partnerOf };
}

/** Every variant of every kept structure, located with its three nearest kept structures. */
async function locateAll(data: Sifted, hydrogens: HydrogenPolicy, scale: LocateScale): Promise<Located[]> {
  const l = data.landscape;
  const kept = await keptWithPolicy(l, data.path, hydrogens, { cacheDir: null });
  const twinLimit = 2 * l.parameters.toleranceAngstrom;
  const out: Located[] = [];
  for (const [variant, opts] of VARIANTS) {
    const refs = data.records.map((r, j) => {
      const v = experimentalVariant(r, { id: `${r.id}-v`, ...opts });
      const b = readCifText(v.cif, `${variant}.cif`)[0];
      if (b.kind !== 'record') throw new Error(b.rejected.reason);
      return referenceInvariants(b.record, l.invariants.k, hydrogens);
    });
    const result = await locateReferences(l, data.path, refs, { scale, count: 3, kept });
    result.references.forEach((ref, j) => {
      const own = l.kept[j];
      const nd = l.structures[own].nearestDistance;
      out.push({
        variant, own, twin: nd !== null && nd <= twinLimit, partner: data.partnerOf.has(own),
        hits: ref.nearest.map((h) => ({ index: h.index, distance: h.distanceAngstrom, emd: h.emdAngstrom, scale: h.scaleFactor })),
      });
    });
  }
  return out;
}

/** (d1, d2) with X present, and with X taken out. */
function present(x: Located): [number, number | null, boolean] {
  return [x.hits[0].distance, x.hits[1]?.distance ?? null, x.hits[0].index === x.own];
}
function absent(x: Located): [number, number | null] {
  const others = x.hits.filter((h) => h.index !== x.own);
  return [others[0].distance, others[1]?.distance ?? null];
}

function report(byScale: Map<LocateScale, Located[]>): void {
  const f = (x: number) => x.toFixed(3);
  process.stdout.write('  variant                    scale-free d1 median/max (raw EMD median/max)  scale recovered: max error  d2/d1 min\n');
  const vol = byScale.get('volume')!;
  const raw = byScale.get('none')!;
  for (const [variant, opts] of VARIANTS) {
    const v = vol.filter((x) => x.variant === variant);
    const r = raw.filter((x) => x.variant === variant);
    const d1 = v.map((x) => present(x)[0]).sort((a, b) => a - b);
    const e1 = r.map((x) => present(x)[0]).sort((a, b) => a - b);
    const s = opts.stretch ?? [1, 1, 1];
    const expected = Math.cbrt(s[0] * s[1] * s[2]);
    const scaleError = Math.max(...v.map((x) => Math.abs((x.hits.find((h) => h.index === x.own)?.scale ?? NaN) - expected)));
    const ratios = v.filter((x) => !x.twin).map((x) => (x.hits[1] ? x.hits[1].distance / x.hits[0].distance : Infinity));
    process.stdout.write(
      `  ${variant.padEnd(26)} ${f(median(d1))} / ${f(d1[d1.length - 1])}   (${f(median(e1))} / ${f(e1[e1.length - 1])})` +
        `${' '.repeat(22)}${(100 * scaleError).toFixed(3)}%${' '.repeat(14)}${Math.min(...ratios) > 1000 ? '> 1000' : Math.min(...ratios).toFixed(2)}\n`,
    );
  }
  const abs = vol.filter((x) => !x.twin && !x.partner).map(absent);
  const a1 = abs.map((x) => x[0]).sort((a, b) => a - b);
  const ar = abs.filter((x) => x[1] !== null).map((x) => (x[1] as number) / x[0]).sort((a, b) => a - b);
  process.stdout.write(
    `  absent (X taken out, no twin or close partner): d1 min ${f(a1[0])}, 5% ${f(quantile(a1, 0.05))}, median ${f(median(a1))}; ` +
      `d2/d1 median ${median(ar).toFixed(2)}, 99% ${quantile(ar, 0.99).toFixed(2)}, max ${ar[ar.length - 1].toFixed(2)}\n`,
  );
  // How each criterion does: found as X when present, not found when absent.
  const d = DEFAULT_FOUND_CRITERION;
  const criteria: Array<[string, FoundCriterion, LocateScale]> = [
    ['default (scale-free)', d, 'volume'],
    ['default, EMD as is', d, 'none'],
    ['duplicate tolerance 0.04, EMD as is', { toleranceAngstrom: 0.04, gapLimitAngstrom: 0.04, gapRatio: 1 }, 'none'],
  ];
  for (const t of [0.1, 0.13, 0.15, 0.18]) criteria.push([`tolerance ${t} only`, { toleranceAngstrom: t, gapLimitAngstrom: t, gapRatio: 1 }, 'volume']);
  for (const [t, limit, g] of [[0.12, 0.2, 1.75], [0.13, 0.2, 1.5], [0.13, 0.2, 2], [0.13, 0.25, 1.75], [0.14, 0.2, 1.75]]) {
    criteria.push([`tolerance ${t}, gap to ${limit} at ${g}x`, { toleranceAngstrom: t, gapLimitAngstrom: limit, gapRatio: g }, 'volume']);
  }
  const partners = vol.some((x) => x.partner);
  process.stdout.write(
    `  criterion                                   present: found as X by variant                 absent: found (false)${partners ? '; found as its close partner' : ''}\n`,
  );
  for (const [label, c, scale] of criteria) {
    const all = byScale.get(scale)!;
    const perVariant = VARIANTS.map(([variant]) => {
      const v = all.filter((x) => x.variant === variant);
      return v.filter((x) => {
        const [d1, d2, isOwn] = present(x);
        return isOwn && decideFound(d1, d2, c).found;
      }).length / v.length;
    });
    const negatives = all.filter((x) => !x.twin && !x.partner);
    const falseFound = negatives.filter((x) => decideFound(...absent(x), c).found).length;
    const withPartner = all.filter((x) => x.partner);
    const asPartner = withPartner.filter((x) => decideFound(...absent(x), c).found).length;
    process.stdout.write(
      `  ${label.padEnd(44)}${perVariant.map((p) => `${Math.round(100 * p)}%`.padStart(5)).join('')}   ${falseFound} of ${negatives.length}` +
        `${partners ? `; ${asPartner} of ${withPartner.length}` : ''}\n`,
    );
  }
}

/** What a 1D search for the best uniform scale adds over the volume-per-atom scale, on stretched references. */
async function bestScaleGain(data: Sifted): Promise<void> {
  const l = data.landscape;
  const k = l.invariants.k;
  const kept = await keptWithPolicy(l, data.path, 'keep', { cacheDir: null });
  let worstGain = 0;
  let sumGain = 0;
  let n = 0;
  const sample = data.records.slice(0, 20);
  for (const [variant, opts] of VARIANTS.filter(([name]) => name.startsWith('stretch') || name.startsWith('uneven'))) {
    for (let j = 0; j < sample.length; j++) {
      const b = readCifText(experimentalVariant(sample[j], { id: 'v', ...opts }).cif, `${variant}.cif`)[0];
      if (b.kind !== 'record') throw new Error(b.rejected.reason);
      const ref = referenceInvariants(b.record, k, 'keep');
      const target = kept.pdds[j];
      const byVolume = Math.cbrt((ref.volumePerAtomA3 as number) / (kept.volumePerAtomA3[j] as number));
      const atVolume = emd(scaled(ref.pdd, 1 / byVolume), target);
      const best = goldenMinimum((s) => emd(scaled(ref.pdd, 1 / s), target), byVolume * 0.97, byVolume * 1.03);
      const gain = atVolume - best;
      worstGain = Math.max(worstGain, gain);
      sumGain += gain;
      n++;
    }
  }
  process.stdout.write(
    `  1D search for the best uniform scale instead of the volume per atom (stretched references, hydrogens kept, ${n} cases): ` +
      `EMD lower by ${(sumGain / n).toFixed(4)} Å on average, ${worstGain.toFixed(4)} Å at most\n`,
  );
}

function scaled(p: Pdd, f: number): Pdd {
  return { k: p.k, rows: p.rows.map((x) => x * f), weights: p.weights };
}

/** Minimum of f on [lo, hi] by a coarse scan and golden-section refinement (f need not be convex). */
function goldenMinimum(f: (x: number) => number, lo: number, hi: number): number {
  let best = Infinity;
  let at = lo;
  const steps = 24;
  for (let i = 0; i <= steps; i++) {
    const x = lo + ((hi - lo) * i) / steps;
    const v = f(x);
    if (v < best) {
      best = v;
      at = x;
    }
  }
  let a = at - (hi - lo) / steps;
  let b = at + (hi - lo) / steps;
  const g = (Math.sqrt(5) - 1) / 2;
  let x1 = b - g * (b - a);
  let x2 = a + g * (b - a);
  let f1 = f(x1);
  let f2 = f(x2);
  for (let it = 0; it < 30; it++) {
    if (f1 < f2) {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - g * (b - a);
      f1 = f(x1);
    } else {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + g * (b - a);
      f2 = f(x2);
    }
  }
  return Math.min(best, f1, f2);
}

function median(sorted: number[]): number {
  return quantile(sorted, 0.5);
}

function quantile(sorted: number[], q: number): number {
  return sorted[Math.min(sorted.length - 1, Math.floor(q * (sorted.length - 1)))];
}
