// Energies per cell (--energy-basis cell): periodic DFT codes report the energy of the whole cell, so sift divides
// it by the molecules in each structure's cell as written (found from the bonds). A generated landscape (src/demo/landscape.ts)
// writes the same packings in their own cell, in P1 and in P1 supercells, so Z differs between copies of one
// packing. The per-cell energies here are made with a Z that does not come from polysift: gemmi (Debian
// python3-gemmi, scripts/bond-lengths-gemmi.py) expands each block and counts its atoms per cell, divided by the
// 11 atoms of the invented molecule.
import { spawnSync } from 'node:child_process';
import Papa from 'papaparse';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { generateLandscape } from '../src/demo/landscape.js';
import { orvazinone } from '../src/demo/molecule.js';
import { initialState, sift, type SiftRun } from '../src/landscape/sift.js';
import { structuresCsv } from '../src/landscape/sift-files.js';
import { energyBasisStage } from '../src/landscape/stages/energy-basis.js';
import { workFromBlock } from '../src/landscape/stages/read.js';
import { readCifText } from '../src/io/read.js';

const dir = mkdtempSync(join(tmpdir(), 'polysift-energy-basis-'));
const gen = generateLandscape({ seed: 17, packings: 5, copiesPerPacking: 6, closePairs: 1, squeezeMoves: 200 });
const cif = join(dir, 'run.cif');
writeFileSync(cif, gen.cif);
let zOf: Map<string, number>;
let perMolecule: SiftRun;
let perCell: SiftRun;

beforeAll(async () => {
  const script = new URL('../scripts/bond-lengths-gemmi.py', import.meta.url).pathname;
  const r = spawnSync('/usr/bin/python3', [script, cif], { encoding: 'utf8', timeout: 120_000, maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`Debian's python3-gemmi is needed for this check: ${r.error?.message ?? r.stderr}`);
  const atoms = orvazinone().elements.length;
  zOf = new Map(Object.entries(JSON.parse(r.stdout) as Record<string, { sites: number }>).map(([id, g]) => [id, g.sites / atoms]));
  // Per-cell energies: the generator's energy per molecule times gemmi's molecules per cell; both files in full precision.
  const csv = (perCell: boolean) => ['id,energy', ...gen.ids.map((id, i) => `${id},${gen.energiesKjPerMol[i] * (perCell ? zOf.get(id)! : 1)}`)].join('\n');
  writeFileSync(join(dir, 'per-molecule.csv'), `${csv(false)}\n`);
  writeFileSync(join(dir, 'per-cell.csv'), `${csv(true)}\n`);
  perMolecule = await sift({ inputs: [cif], energiesFile: join(dir, 'per-molecule.csv'), threads: 2, cacheDir: null });
  perCell = await sift({ inputs: [cif], energiesFile: join(dir, 'per-cell.csv'), energyBasis: 'cell', threads: 2, cacheDir: null });
}, 240_000);

describe('energies per cell', () => {
  it('divides by molecule counts that differ between copies of one packing (supercells), as gemmi counts them', () => {
    expect(new Set(zOf.values()).size).toBeGreaterThan(1);
    // The divisor is the count in the cell as written (row.z is the crystal's Z in its detected group since issue 11).
    for (const r of perCell.landscape.structures) expect(r.notes).toContain(`energy per cell divided by ${zOf.get(r.id)}, the molecules in the cell as written (found from the bonds)`);
  });

  it('give the same landscape as the energies per molecule', () => {
    const a = perMolecule.landscape;
    const b = perCell.landscape;
    expect(b.parameters.energyBasis).toBe('cell');
    expect(b.kept).toEqual(a.kept);
    expect(b.counts).toEqual(a.counts);
    expect(b.families).toEqual(a.families);
    b.structures.forEach((r, i) => {
      const s = a.structures[i];
      expect([r.status, r.duplicateOf, r.keptIndex, r.family, r.nearest]).toEqual([s.status, s.duplicateOf, s.keptIndex, s.family, s.nearest]);
      expect(r.energy!).toBeCloseTo(s.energy!, 5);
      expect(r.energyRel!).toBeCloseTo(s.energyRel!, 5);
    });
    // Every row says which Z it was divided by; otherwise the tables agree column by column.
    expect(b.structures.every((r) => r.notes.includes(`energy per cell divided by ${zOf.get(r.id)}, the molecules in the cell as written (found from the bonds)`))).toBe(true);
    // Every column but notes (the notes column holds the energy-per-cell codes on top).
    const strip = (csv: string) => Papa.parse<string[]>(csv.trim()).data.map((row, _, all) => row.filter((__, c) => all[0][c] !== 'notes'));
    expect(strip(structuresCsv(b))).toEqual(strip(structuresCsv(a)));
    expect(perCell.messages.join('\n')).toMatch(/energies are per cell: divided by the molecules in each cell as written \(from its bonds\): \d+ for \d+, \d+ for \d+/);
  });

  it('gives no energy, with the reason, to a cell holding two kinds of molecule or with an unknown Z', async () => {
    // Water and ammonia in one P1 cell (invented; O-H 0.96 Å, N-H 1.01 Å, common practice): two formulas, no single Z.
    const mixed = [
      'data_mixed', '_cell_length_a 8', '_cell_length_b 8', '_cell_length_c 8', '_cell_angle_alpha 90', '_cell_angle_beta 90', '_cell_angle_gamma 90',
      "_symmetry_space_group_name_H-M 'P 1'",
      'loop_', '_atom_site_label', '_atom_site_type_symbol', '_atom_site_fract_x', '_atom_site_fract_y', '_atom_site_fract_z',
      'O1 O 0.1 0.1 0.1', 'H1 H 0.22 0.1 0.1', 'H2 H 0.1 0.22 0.1',
      'N1 N 0.6 0.6 0.6', 'H3 H 0.726 0.6 0.6', 'H4 H 0.6 0.726 0.6', 'H5 H 0.6 0.6 0.726', '',
    ].join('\n');
    const file = join(dir, 'mixed.cif');
    const start = gen.cif.indexOf('data_');
    writeFileSync(file, `${mixed}\n${gen.cif.slice(start, gen.cif.indexOf('\ndata_', start) + 1)}`);
    const first = gen.ids[0];
    writeFileSync(join(dir, 'mixed.csv'), `id,energy\nmixed,-100\n${first},${gen.energiesKjPerMol[0] * zOf.get(first)!}\n`);
    const run = await sift({ inputs: [file], energiesFile: join(dir, 'mixed.csv'), energyBasis: 'cell', threads: 1, cacheDir: null });
    const [m, o] = run.landscape.structures;
    expect(m.formulas.sort()).toEqual(['H2O', 'H3N']);
    expect(m.energy).toBeNull();
    expect(m.reason).toMatch(/^no energy: the energy is per cell and the cell holds more than one kind of molecule \((H2O, H3N|H3N, H2O)\), so there is no single Z/);
    expect(o.energy!).toBeCloseTo(gen.energiesKjPerMol[0], 5);
    expect(run.messages.join('\n')).toMatch(/1 structure\(s\) have a per-cell energy but no single molecule count to divide it by/);

    // A structure whose crystal facts could not be computed has no molecule count: the stage leaves its energy out and says why.
    const s = initialState({ inputs: ['x.cif'], energyBasis: 'cell' });
    const b = readCifText(gen.cif, 'x.cif')[0];
    const w = workFromBlock(b, 0);
    w.row.energy = -250;
    w.facts = null;
    s.work.push(w);
    await energyBasisStage(s);
    expect(w.row.energy).toBeNull();
    expect(w.row.reason).toBe('no energy: the energy is per cell and the molecules per cell are unknown, so it cannot be divided');
  });

  it('is asked for on the command line with --energy-basis cell, and says so', () => {
    const out = join(dir, 'cli');
    const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
    // The old spelling of the tolerance is still read (the default value, so the landscape is the same).
    const r = spawnSync(tsx, [join(process.cwd(), 'src', 'cli.ts'), 'sift', cif, '--energies', join(dir, 'per-cell.csv'), '--energy-basis', 'cell',
      '--duplicate-tolerance', '0.04', '--no-cache', '--threads', '1', '--out', out], { encoding: 'utf8', timeout: 240_000 });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/polysift: energies are per cell: divided by the molecules in each cell as written/);
    const landscape = JSON.parse(readFileSync(join(out, 'landscape.json'), 'utf8')) as typeof perCell.landscape;
    expect(landscape.parameters.energyBasis).toBe('cell');
    expect(readFileSync(join(out, 'structures.csv'), 'utf8')).toBe(structuresCsv({ ...perCell.landscape, parameters: { ...perCell.landscape.parameters, inputs: landscape.parameters.inputs } }));
    const bad = spawnSync(tsx, [join(process.cwd(), 'src', 'cli.ts'), 'sift', cif, '--energy-basis', 'atom', '--out', join(dir, 'bad')], { encoding: 'utf8' });
    expect(bad.status).toBe(1);
    expect(bad.stderr).toBe("polysift: --energy-basis must be molecule or cell, not 'atom'\n");
  }, 240_000);

  it('leaves energies per molecule untouched (the default)', async () => {
    const s = initialState({ inputs: ['x.cif'] });
    const w = workFromBlock(readCifText(gen.cif, 'x.cif')[0], 0);
    w.row.energy = -250;
    w.row.z = 4;
    const notes = w.row.notes.slice();
    s.work.push(w);
    await energyBasisStage(s);
    expect(w.row.energy).toBe(-250);
    expect(w.row.notes).toEqual(notes);
    expect(s.messages).toEqual([]);
  });
});
