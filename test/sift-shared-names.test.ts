// Runs combined from several files often repeat block names (every run calls its first structure cand-01).
// Every reference to a structure in the outputs must still name exactly one structure (issue 10, part 4):
// structures whose block name is shared get the id name~n (src/landscape/unique-ids.ts), nothing is lost,
// and a row never names itself as its duplicate.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { generateLandscape } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { siftFiles } from '../src/landscape/sift-files.js';
import { readCifText } from '../src/io/read.js';
import { uniqueIds, renameBlockText } from '../src/landscape/unique-ids.js';
import { ensureUniqueIds } from '../src/landscape/load.js';

describe('unique ids', () => {
  it('keeps names of their own, numbers shared ones in input order and never reuses an existing name', () => {
    const r = uniqueIds(['a', 'b', 'a', 'a~1', 'c', 'a', '', '']);
    expect(r.ids).toEqual(['a~2', 'b', 'a~3', 'a~1', 'c', 'a~4', '', '']);
    expect(new Set(r.ids.filter((x) => x !== '')).size).toBe(6);
    expect(r.shared).toEqual([3, 1, 3, 1, 1, 3, 2, 2]);
  });

  it('renames the data_ line of a block only', () => {
    expect(renameBlockText('data_x\n_cell_length_a 5\n# data_x\n', 'x', 'x~2')).toBe('data_x~2\n_cell_length_a 5\n# data_x\n');
    expect(renameBlockText('data_x.1\n', 'x.1', 'x.1~1')).toBe('data_x.1~1\n');
    expect(renameBlockText('data_xy\n', 'x', 'x~1')).toBe('data_xy\n');
  });
});

describe('sift over two files whose blocks share names', async () => {
  // Two invented runs that both number their structures cand-01, cand-02, ...
  const runA = generateLandscape({ seed: 31, packings: 3, copiesPerPacking: 3, closePairs: 0, squeezeMoves: 200 });
  const runB = generateLandscape({ seed: 32, packings: 3, copiesPerPacking: 3, closePairs: 0, squeezeMoves: 200 });
  const dir = mkdtempSync(join(tmpdir(), 'polysift-names-'));
  writeFileSync(join(dir, 'a.cif'), runA.cif);
  writeFileSync(join(dir, 'b.cif'), runB.cif);
  // Energies listed by block name for run A only; run B's by the unique ids sift gives them.
  const energies = ['id,energy', ...runA.ids.map((id, i) => `${id},${runA.energiesKjPerMol[i].toFixed(4)}`)];
  energies.push(...runB.ids.map((id, i) => `${id}~2,${runB.energiesKjPerMol[i].toFixed(4)}`));
  writeFileSync(join(dir, 'energies.csv'), `${energies.join('\n')}\n`);
  const run = await sift({ inputs: [join(dir, 'a.cif'), join(dir, 'b.cif')], energiesFile: join(dir, 'energies.csv'), threads: 2, cacheDir: null });
  const l = run.landscape;
  const files = new Map(siftFiles(run, { report: false }));
  const csv = Papa.parse<Record<string, string>>(files.get('structures.csv')!, { header: true, skipEmptyLines: true }).data;

  it('lists every block once, with ids that are unique and a note naming the shared block name', () => {
    expect(runA.ids).toEqual(runB.ids);
    expect(l.counts.input).toBe(runA.ids.length + runB.ids.length);
    expect(csv.map((r) => r.block)).toEqual([...runA.ids, ...runB.ids]);
    expect(new Set(csv.map((r) => r.id)).size).toBe(csv.length);
    expect(csv.map((r) => r.id)).toEqual([...runA.ids.map((id) => `${id}~1`), ...runB.ids.map((id) => `${id}~2`)]);
    // The notes column holds codes (issue 13); notes.csv gives each code's text once.
    const noteText = new Map(Papa.parse<Record<string, string>>(files.get('notes.csv')!, { header: true, skipEmptyLines: true }).data.map((n) => [n.code, n.text]));
    const texts = csv[0].notes.split(';').map((c) => noteText.get(c));
    expect(texts.some((t) => new RegExp(`the block name ${runA.ids[0]} is used by 2 input blocks, so this structure's id is ${runA.ids[0]}~1`).test(t ?? ''))).toBe(true);
    const c = l.counts;
    expect(c.kept + c.duplicate + c.rejected + c.outsideWindow).toBe(c.input);
  });

  it('resolves every duplicate_of and nearest to exactly one row, never the row itself', () => {
    const byId = new Map<string, Array<Record<string, string>>>();
    for (const r of csv) byId.set(r.id, [...(byId.get(r.id) ?? []), r]);
    let references = 0;
    for (const r of csv) {
      if (r.status === 'duplicate') {
        expect(byId.get(r.duplicate_of)).toHaveLength(1);
        expect(r.duplicate_of).not.toBe(r.id);
        expect(byId.get(r.duplicate_of)![0].status).toBe('kept');
        references++;
      }
      if (r.nearest !== '') {
        expect(byId.get(r.nearest)).toHaveLength(1);
        expect(r.nearest).not.toBe(r.id);
        references++;
      }
    }
    expect(references).toBeGreaterThan(l.counts.input);
    // The JSON agrees with the CSV: the ids behind the indices.
    for (const r of l.structures) {
      if (r.duplicateOf !== null) expect(l.structures[r.keptIndex!].id).toBe(r.duplicateOf);
      if (r.nearest !== null) expect(l.structures[r.nearestIndex!].id).toBe(r.nearest);
    }
  });

  it('takes run B\'s energies listed under the new ids, and gives the shared names none', () => {
    const rowsB = l.structures.slice(runA.ids.length);
    rowsB.forEach((r, i) => expect(r.energy).toBeCloseTo(runB.energiesKjPerMol[i], 4));
    for (const r of l.structures.slice(0, runA.ids.length)) {
      expect(r.energy).toBeNull();
      expect(r.reason).toMatch(/the id is shared by 2 structures .* list each one by its id/);
    }
  });

  it('writes each kept block under its id in unique.cif, so no block name repeats there', () => {
    const blocks = readCifText(files.get('unique.cif')!, 'unique.cif');
    const names = blocks.map((b) => (b.kind === 'record' ? b.record.id : b.rejected.id));
    expect(names).toEqual(l.kept.map((k) => l.structures[k].id));
    expect(new Set(names).size).toBe(names.length);
  });

  it('makes the ids of a landscape written before unique ids unique on loading, for diff and locate', () => {
    const old = structuredClone(l);
    for (const r of old.structures) {
      r.id = r.block;
      r.notes = [];
    }
    for (const r of old.structures) {
      if (r.duplicateOf !== null) r.duplicateOf = old.structures[r.keptIndex!].id;
      if (r.nearest !== null) r.nearest = old.structures[r.nearestIndex!].id;
    }
    expect(ensureUniqueIds(old, 'old run')).toMatch(/old run repeats \d+ structure id/);
    expect(old.structures.map((r) => r.id)).toEqual(l.structures.map((r) => r.id));
    expect(old.structures.map((r) => r.duplicateOf)).toEqual(l.structures.map((r) => r.duplicateOf));
    expect(ensureUniqueIds(l, 'new run')).toBeNull();
  });
});
