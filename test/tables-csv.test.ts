// Every CSV polysift writes, checked as a user's tools read it (issue 13): pandas' read_csv with its defaults
// (pandas, pip; scripts/csv-dtypes.py) must see a numeric column wherever the values are numbers; units are in the
// headers (lower-case suffixes, src/io/tables.ts); no number carries more decimals than its quantity's precision;
// repeated notes are short codes listed once in notes.csv; and the README explains every column of every table.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import { generateLandscape } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { ENERGY_ISSUES_COLUMNS, NOTES_COLUMNS, siftFiles, STRUCTURES_COLUMNS, UNIQUE_COLUMNS } from '../src/landscape/sift-files.js';
import { DIFF_PAIR_COLUMNS, DIFF_STRUCTURE_COLUMNS, writeDiffOutputs } from '../src/landscape/diff-files.js';
import { LOCATE_COLUMNS, writeLocateOutputs } from '../src/landscape/locate-files.js';
import { diffLandscapes } from '../src/landscape/diff.js';
import { locateReferences } from '../src/landscape/locate.js';
import { referenceInvariants } from '../src/landscape/references.js';
import { writeFilesAtomically } from '../src/io/outputs.js';
import { readCifText } from '../src/io/read.js';
import { columnHeader, decimalsOf, ENERGY_SUFFIX, type Column, type Quantity } from '../src/io/tables.js';
import { KJ_PER_EV, KJ_PER_KCAL } from '../src/io/energies.js';
import { experimentalVariant } from '../src/bench/_experimental-variants.js';
import type { EnergyUnit, Landscape } from '../src/landscape/schema.js';

const root = mkdtempSync(join(tmpdir(), 'polysift-tables-'));
const gen = generateLandscape({ seed: 5, packings: 6, copiesPerPacking: 5, closePairs: 1, squeezeMoves: 200 });
const cif = join(root, 'run.cif');
// One block that cannot be read, so structures.csv has a rejected row.
writeFileSync(cif, `${gen.cif}\ndata_broken\n_cell_length_a 7.1\n`);
/** An energies file in `unit` (converted from the generator's kJ/mol), with an id that matches no structure. */
function energies(name: string, perKj: number): string {
  const file = join(root, name);
  writeFileSync(file, ['id,energy', ...gen.ids.map((id, i) => `${id},${gen.energiesKjPerMol[i] / perKj}`), 'ghost,-1'].join('\n') + '\n');
  return file;
}

interface TableFile {
  path: string;
  columns: ReadonlyArray<Column<never>>;
  unit: EnergyUnit;
}
const files: Record<string, TableFile> = {};
let landscapeA: Landscape;

beforeAll(async () => {
  const dirA = join(root, 'a');
  const dirB = join(root, 'b');
  const runA = await sift({ inputs: [cif], energiesFile: energies('ev.csv', KJ_PER_EV), energyUnit: 'eV', threads: 2, cacheDir: null });
  writeFilesAtomically(dirA, siftFiles(runA, { report: false }));
  const runB = await sift({ inputs: [cif], energiesFile: energies('kcal.csv', KJ_PER_KCAL), energyUnit: 'kcal/mol', threads: 2, cacheDir: null, toleranceAngstrom: 0.03 });
  writeFilesAtomically(dirB, siftFiles(runB, { report: false }));
  landscapeA = runA.landscape;
  const d = await diffLandscapes(runB.landscape, runA.landscape, dirB, dirA, { threads: 1 });
  writeDiffOutputs(join(root, 'diff'), d);
  const kept = readCifText(runA.keptTexts[1], 'kept.cif')[0];
  if (kept.kind !== 'record') throw new Error(kept.rejected.reason);
  const warm = readCifText(experimentalVariant(kept.record, { id: 'warm', stretch: [1.01, 1.005, 1.01] }).cif, 'warm.cif')[0];
  if (warm.kind !== 'record') throw new Error(warm.rejected.reason);
  const refs = [referenceInvariants(warm.record, landscapeA.invariants.k, 'keep')];
  const located = await locateReferences(landscapeA, join(dirA, 'landscape.json'), refs, { threads: 1 });
  located.unusable = [{ source: 'refs.cif#bad', line: 3, reason: 'no _cell_length_b' }];
  writeLocateOutputs(join(root, 'locate'), located, landscapeA);
  const add = (name: string, path: string, columns: ReadonlyArray<Column<never>>, unit: EnergyUnit) => (files[name] = { path, columns, unit });
  add('structures.csv', join(dirA, 'structures.csv'), STRUCTURES_COLUMNS as ReadonlyArray<Column<never>>, 'eV');
  add('structures.csv (kcal/mol)', join(dirB, 'structures.csv'), STRUCTURES_COLUMNS as ReadonlyArray<Column<never>>, 'kcal/mol');
  add('unique.csv', join(dirA, 'unique.csv'), UNIQUE_COLUMNS as ReadonlyArray<Column<never>>, 'eV');
  add('notes.csv', join(dirA, 'notes.csv'), NOTES_COLUMNS as ReadonlyArray<Column<never>>, 'eV');
  add('energy-issues.csv', join(dirA, 'energy-issues.csv'), ENERGY_ISSUES_COLUMNS as ReadonlyArray<Column<never>>, 'eV');
  add('diff-structures.csv', join(root, 'diff', 'diff-structures.csv'), DIFF_STRUCTURE_COLUMNS as ReadonlyArray<Column<never>>, 'kcal/mol');
  add('diff-pairs.csv', join(root, 'diff', 'diff-pairs.csv'), DIFF_PAIR_COLUMNS as ReadonlyArray<Column<never>>, 'kcal/mol');
  add('locate.csv', join(root, 'locate', 'locate.csv'), LOCATE_COLUMNS as ReadonlyArray<Column<never>>, 'eV');
}, 240_000);

const read = (path: string) => Papa.parse<Record<string, string>>(readFileSync(path, 'utf8'), { header: true, skipEmptyLines: true });

describe('CSV tables', () => {
  it('load with pandas read_csv defaults into numeric columns wherever the values are numbers', () => {
    const paths = [...Object.values(files).map((f) => f.path), join(root, 'a', 'convergence.csv')];
    const r = spawnSync('python3', [new URL('../scripts/csv-dtypes.py', import.meta.url).pathname, ...paths], { encoding: 'utf8', timeout: 120_000 });
    if (r.status !== 0) throw new Error(`python3 with pandas (pip install pandas) is needed for this check: ${r.error?.message ?? r.stderr}`);
    const pandas = JSON.parse(r.stdout) as Record<string, { columns: string[]; numeric: Record<string, boolean>; rows: number }>;
    for (const [name, f] of Object.entries(files)) {
      const p = pandas[f.path];
      const headers = f.columns.map((c) => columnHeader(c, f.unit));
      expect(p.columns, name).toEqual(headers);
      expect(p.rows, name).toBe(read(f.path).data.length);
      for (const c of f.columns) {
        const h = columnHeader(c, f.unit);
        if (c.quantity !== 'text') expect(p.numeric[h], `${name}: ${h}`).toBe(true);
      }
    }
    const conv = pandas[join(root, 'a', 'convergence.csv')];
    expect(conv.columns[0]).toBe('processed');
    for (const c of conv.columns) expect(conv.numeric[c], c).toBe(true);
    for (const c of conv.columns.slice(1)) expect(c).toMatch(/^within_[0-9.]+_ev$/);
  });

  it('state units in the headers, in the run\'s energy unit', () => {
    const a = read(files['structures.csv'].path).meta.fields!;
    for (const h of ['energy_ev', 'energy_rel_ev', 'density_g_per_cm3', 'a_angstrom', 'b_angstrom', 'c_angstrom', 'alpha_deg', 'beta_deg', 'gamma_deg',
      'volume_angstrom3', 'distance_to_kept_angstrom', 'nearest_distance_angstrom', 'nn_distance_angstrom', 'z', 'z_prime', 'atoms', 'members', 'family'])
      expect(a).toContain(h);
    const b = read(files['structures.csv (kcal/mol)'].path).meta.fields!;
    expect(b).toContain('energy_kcal_per_mol');
    expect(b).not.toContain('energy_ev');
    expect(read(files['diff-pairs.csv'].path).meta.fields).toContain('energy_rel_shift_kcal_per_mol');
    expect(read(files['locate.csv'].path).meta.fields).toEqual(expect.arrayContaining(['distance_angstrom', 'emd_angstrom', 'scale_factor', 'energy_rel_ev']));
    // Every number column names its unit unless it is dimensionless.
    const dimensionless: Quantity[] = ['integer', 'z-prime', 'scale', 'ratio'];
    for (const f of Object.values(files))
      for (const c of f.columns)
        if (c.quantity !== 'text' && !dimensionless.includes(c.quantity)) expect(columnHeader(c, f.unit)).toMatch(/_(angstrom|angstrom3|deg|g_per_cm3|kj_per_mol|kcal_per_mol|ev)$/);
  });

  it('write no number with more decimals than its quantity\'s precision, and no exponents', () => {
    let numbers = 0;
    for (const [name, f] of Object.entries(files)) {
      const rows = read(f.path).data;
      for (const c of f.columns) {
        if (c.quantity === 'text') continue;
        const h = columnHeader(c, f.unit);
        const d = decimalsOf(c.quantity, f.unit);
        const pattern = d === null ? /^-?\d+$/ : new RegExp(`^-?\\d+(\\.\\d{1,${d}})?$`);
        for (const row of rows) {
          const v = row[h];
          if (v === '') continue;
          numbers++;
          expect(v, `${name}: ${h}`).toMatch(pattern);
          if (d !== null && v.includes('.')) expect(v.endsWith('0'), `${name}: ${h} = ${v} has a trailing zero`).toBe(false);
        }
      }
    }
    expect(numbers).toBeGreaterThan(500);
    // Values that motivated the change: Z' = 1/48-like fractions and float noise are rounded.
    expect(readFileSync(files['diff-pairs.csv'].path, 'utf8')).not.toMatch(/\d\.\d{7,}/);
  });

  it('leave the family cell empty for structures in no family (landscape.json keeps -1)', () => {
    const rows = read(files['structures.csv'].path).data;
    landscapeA.structures.forEach((s, i) => expect(rows[i].family).toBe(s.family < 0 ? '' : String(s.family)));
    expect(landscapeA.structures.some((s) => s.family === -1)).toBe(true);
  });

  it('write repeated notes as codes, each code\'s text once in notes.csv', () => {
    const rows = read(files['structures.csv'].path).data;
    const notes = read(files['notes.csv'].path).data;
    const texts = notes.map((n) => n.text);
    expect(new Set(texts).size).toBe(texts.length);
    const codes = new Set(notes.map((n) => n.code));
    expect(codes.size).toBe(notes.length);
    const withNotes = rows.filter((r) => r.notes !== '');
    expect(withNotes.length).toBeGreaterThan(notes.length);
    for (const r of withNotes) for (const c of r.notes.split(';')) expect(codes.has(c), c).toBe(true);
    for (const n of notes) {
      expect(n.code).toMatch(/^[a-z0-9-]+(\.\d+)?$/);
      expect(Number(n.structures)).toBe(rows.filter((r) => r.notes.split(';').includes(n.code)).length);
      // The full text is the one landscape.json keeps on those rows.
      const holders = landscapeA.structures.filter((s) => s.notes.includes(n.text)).length;
      expect(holders).toBe(Number(n.structures));
    }
  });

  it('are each explained column by column in the README', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const section = (file: string) => {
      const start = readme.indexOf(`#### \`${file}\``);
      expect(start, `README has no section for ${file}`).toBeGreaterThan(0);
      const end = readme.indexOf('\n#', start + 5);
      return readme.slice(start, end < 0 ? undefined : end);
    };
    const generic = (h: string) => h.replace(new RegExp(`(${Object.values(ENERGY_SUFFIX).join('|')})$`), '_<unit>');
    for (const [name, f] of Object.entries(files)) {
      const text = section(name.split(' ')[0]);
      for (const c of f.columns) expect(text, `${name}: ${columnHeader(c, f.unit)}`).toContain(`| \`${generic(columnHeader(c, f.unit))}\` |`);
    }
    const conv = section('convergence.csv');
    for (const h of ['processed', 'within_<window>_<unit>']) expect(conv).toContain(`| \`${h}\` |`);
  });
});
