// The main claim of sift on a labelled landscape from the generator (src/demo): K distinct packings of an
// invented molecule, each written 6 times (other cell, setting, origin, supercell, P1, atom order) with
// optimiser-like noise, including pairs of distinct packings within 0.1 kJ/mol and 0.005 g/cm3. sift must keep
// exactly K structures and group the copies as the truth does (adjusted Rand index 1.0; Hubert & Arabie,
// J. Classification 1985, src/cluster/stats.ts), while the usual energy/density windows (0.5 kJ/mol,
// 0.02 g/cm3; common practice, from memory) merge the close distinct pairs.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape } from '../src/demo/landscape.js';
import { binByWindows } from '../src/demo/window-binning.js';
import { sift } from '../src/landscape/sift.js';
import { structuresCsv } from '../src/landscape/sift-files.js';
import { adjustedRandIndex } from '../src/cluster/stats.js';
import Papa from 'papaparse';

const K = 8;
const gen = generateLandscape({ seed: 11, packings: K, copiesPerPacking: 6, closePairs: 2 });
const dir = mkdtempSync(join(tmpdir(), 'polysift-sift-'));
writeFileSync(join(dir, 'landscape.cif'), gen.cif);
writeFileSync(join(dir, 'energies.csv'), gen.energiesCsv);

describe('sift on a labelled generated landscape', async () => {
  const cacheDir = join(dir, 'cache');
  const run = await sift({ inputs: [join(dir, 'landscape.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, cacheDir });
  const l = run.landscape;

  it('keeps exactly K structures and groups copies as the truth does (ARI 1.0), where energy/density windows merge close pairs', () => {
    const grouping = l.structures.map((r) => r.keptIndex!);
    const ariSift = adjustedRandIndex(grouping, gen.truth);
    const bins = binByWindows(gen.energiesKjPerMol, l.structures.map((r) => r.densityGPerCm3!));
    const ariBins = adjustedRandIndex(bins, gen.truth);
    const binGroups = new Set(bins).size;
    // A close pair is merged by the windows when some copy of one shares a bin with some copy of the other.
    const merged = gen.closePairs.filter(([a, b]) => {
      const binsOf = (p: number) => new Set(Array.from(gen.truth).flatMap((t, i) => (t === p ? [bins[i]] : [])));
      const A = binsOf(a);
      return [...binsOf(b)].some((x) => A.has(x));
    });
    console.log(
      `sift: ${l.counts.kept} kept of ${l.counts.input} (truth ${K}), ARI ${ariSift.toFixed(4)}; ` +
        `windows 0.5 kJ/mol + 0.02 g/cm3: ${binGroups} groups, ARI ${ariBins.toFixed(4)}, close pairs merged ${merged.length} of ${gen.closePairs.length}`,
    );
    expect(l.counts.kept).toBe(K);
    expect(ariSift).toBe(1);
    expect(merged.length).toBe(gen.closePairs.length);
    expect(ariBins).toBeLessThan(1);
    // The kept structure of each group is its lowest-energy member.
    for (const r of l.structures) expect(r.energy!).toBeGreaterThanOrEqual(l.structures[r.keptIndex!].energy!);
  });

  it('puts the tolerance in the gap between noise and distinct structures', () => {
    const dup = l.structures.filter((r) => r.status === 'duplicate').map((r) => r.distanceToKept!);
    const distinct = l.structures.filter((r) => r.status === 'kept').map((r) => r.nearestDistance!);
    console.log(`duplicates lie <= ${Math.max(...dup)} Å from their kept structure; kept structures >= ${Math.min(...distinct)} Å apart`);
    expect(Math.max(...dup)).toBeLessThan(l.parameters.toleranceAngstrom);
    expect(Math.min(...distinct)).toBeGreaterThan(l.parameters.toleranceAngstrom);
  });

  it('lists every input block exactly once in structures.csv, with counts adding up', () => {
    const csv = Papa.parse<Record<string, string>>(structuresCsv(l), { header: true, skipEmptyLines: true }).data;
    expect(csv.map((r) => r.id)).toEqual(gen.ids);
    expect(new Set(csv.map((r) => r.source)).size).toBe(gen.ids.length);
    const c = l.counts;
    expect(c.kept + c.duplicate + c.rejected + c.outsideWindow).toBe(c.input);
    expect(c.input).toBe(gen.ids.length);
    for (const status of ['kept', 'duplicate'] as const) expect(csv.filter((r) => r.status === status).length).toBe(status === 'kept' ? c.kept : c.duplicate);
    // Members of kept structures add up to every compared structure.
    expect(l.kept.reduce((s, k) => s + l.structures[k].members, 0)).toBe(c.kept + c.duplicate);
  });

  it('marks structures above an energy window as outside-window and still lists them', async () => {
    const lowest = Math.min(...gen.energiesKjPerMol);
    const window = 4;
    const w = await sift({ inputs: [join(dir, 'landscape.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, energyWindow: window, cacheDir });
    expect(w.cache.misses).toBe(0);
    const above = gen.energiesKjPerMol.filter((e) => e - lowest > window).length;
    expect(w.landscape.counts.outsideWindow).toBe(above);
    expect(w.landscape.structures.length).toBe(gen.ids.length);
    expect(above).toBeGreaterThan(0);
  });
});

describe('sift families above the dense limit', async () => {
  it('gives the same families and neighbours from the lazy path (neighbour graph + AMD bound) as from the full matrix', async () => {
    const base = { inputs: [join(dir, 'landscape.cif')], energiesFile: join(dir, 'energies.csv'), threads: 1, cacheDir: join(dir, 'cache'), minFamilySize: 2 };
    const dense = await sift(base);
    // Two threads: lazy HDBSCAN and the landmark map then run in worker threads side by side.
    const lazy = await sift({ ...base, denseLimit: 2, threads: 2 });
    expect(lazy.landscape.counts.kept).toBe(K);
    expect(lazy.landscape.structures.map((r) => r.family)).toEqual(dense.landscape.structures.map((r) => r.family));
    expect(lazy.landscape.edges).toEqual(dense.landscape.edges);
    // HDBSCAN with families of 2 on 8 packings (3 close pairs among them) finds some family.
    expect(dense.landscape.families.length).toBeGreaterThan(0);
    // With fewer kept structures than landmarks, the landmark map is the full map (src/cluster/embedding-landmarks.ts).
    expect(lazy.landscape.embedding!.coords).toHaveLength(K);
    expect(lazy.landscape.embedding!.coords).toEqual(dense.landscape.embedding!.coords);
  });
});

describe('energies from a CIF data item', () => {
  it('reads each block\'s energy from --energy-item and orders the collapse by it, as with the CSV', async () => {
    const g = generateLandscape({ seed: 21, packings: 3, copiesPerPacking: 3, closePairs: 0, energyItem: 'invented_lattice_energy' });
    const d = mkdtempSync(join(tmpdir(), 'polysift-item-'));
    writeFileSync(join(d, 'run.cif'), g.cif);
    writeFileSync(join(d, 'energies.csv'), g.energiesCsv);
    const fromItem = await sift({ inputs: [join(d, 'run.cif')], energyItem: 'invented_lattice_energy', threads: 1, cacheDir: join(d, 'cache') });
    const fromCsv = await sift({ inputs: [join(d, 'run.cif')], energiesFile: join(d, 'energies.csv'), threads: 1, cacheDir: join(d, 'cache') });
    // The generator writes the same 4-decimal value in both places.
    expect(fromItem.landscape.structures.map((r) => r.energy)).toEqual(g.energiesKjPerMol.map((e) => Number(e.toFixed(4))));
    expect(fromItem.landscape.kept).toEqual(fromCsv.landscape.kept);
    expect(fromItem.landscape.counts.kept).toBe(3);
  });
});
