// Bad input in a sift run (issue 4, DESIGN.md "Bad input"): broken CIF blocks and a bad energies CSV are
// reported per row and the run completes with exit code 0; input with nothing usable exits non-zero with one
// line. Runs the real command line.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { generateLandscape } from '../src/demo/landscape.js';

const cli = join(process.cwd(), 'src', 'cli.ts');
const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const polysift = (args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8' });

const gen = generateLandscape({ seed: 3, packings: 3, copiesPerPacking: 3, closePairs: 0 });
const dir = mkdtempSync(join(tmpdir(), 'polysift-bad-'));

// Three broken blocks: no cell, no atom sites, a unterminated quoted value.
const broken = [
  'data_nocell\nloop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nC1 C 0.1 0.2 0.3\n',
  'data_noatoms\n_cell_length_a 5\n_cell_length_b 6\n_cell_length_c 7\n_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n',
  "data_garbled\n_cell_length_a 'five\n",
].join('\n');
writeFileSync(join(dir, 'run.cif'), `${gen.cif}\n${broken}`);
// Energies: one unknown id, one repeated id with another value, one non-numeric value; one structure missing.
const lines = gen.energiesCsv.trim().split('\n');
const [header, ...rows] = lines;
const missingId = gen.ids[1];
const repeatedId = gen.ids[2];
const nonNumericId = gen.ids[3];
const energyRows = rows
  .filter((r) => !r.startsWith(`${missingId},`))
  .map((r) => (r.startsWith(`${nonNumericId},`) ? `${nonNumericId},n/a` : r));
energyRows.push(`${repeatedId},-1.0`, 'not-a-structure,-50');
writeFileSync(join(dir, 'energies.csv'), [header, ...energyRows].join('\n') + '\n');

describe('sift with bad input', () => {
  it('reports broken blocks and bad energy rows per row and completes', () => {
    const out = join(dir, 'out');
    const r = polysift(['sift', join(dir, 'run.cif'), '--energies', join(dir, 'energies.csv'), '--out', out, '--threads', '1', '--json']);
    expect(r.stderr).not.toMatch(/at .*\.ts:\d+/); // no stack trace
    expect(r.status).toBe(0);
    const csv = Papa.parse<Record<string, string>>(readFileSync(join(out, 'structures.csv'), 'utf8'), { header: true, skipEmptyLines: true }).data;
    // Every block exactly once, in input order.
    expect(csv.map((x) => x.id)).toEqual([...gen.ids, 'nocell', 'noatoms', 'garbled']);
    const by = new Map(csv.map((x) => [x.id, x]));
    expect(by.get('nocell')!.status).toBe('rejected');
    expect(by.get('nocell')!.reason).toMatch(/_cell_length_a/);
    expect(by.get('noatoms')!.status).toBe('rejected');
    expect(by.get('noatoms')!.reason).toMatch(/atom/);
    expect(by.get('garbled')!.status).toBe('rejected');
    expect(by.get('garbled')!.reason).toMatch(/line \d+/);
    expect(by.get(missingId)!.reason).toMatch(/no energy: id not found in .*energies.csv/);
    expect(by.get(missingId)!.energy_kj_per_mol).toBe('');
    expect(by.get(repeatedId)!.reason).toMatch(/different energies/);
    expect(by.get(nonNumericId)!.reason).toMatch(/'n\/a' is not a number/);
    // Summary on stderr, issues per row in energy-issues.csv.
    expect(r.stderr).toMatch(/3 structure\(s\) have no energy/);
    expect(r.stderr).toMatch(/1 id\(s\) in .*energies.csv match no structure: not-a-structure/);
    const issues = readFileSync(join(out, 'energy-issues.csv'), 'utf8');
    expect(issues).toMatch(/not-a-structure,id matches no structure/);
    const summary = JSON.parse(r.stdout);
    const c = summary.counts;
    expect(c.rejected).toBe(3);
    expect(c.kept + c.duplicate + c.rejected + c.outsideWindow).toBe(c.input);
    expect(c.input).toBe(gen.ids.length + 3);
  }, 30000);

  it('exits non-zero with one line when nothing is usable, and writes nothing', () => {
    writeFileSync(join(dir, 'only-bad.cif'), broken);
    const out = join(dir, 'out-bad');
    const r = polysift(['sift', join(dir, 'only-bad.cif'), '--out', out, '--quiet']);
    expect(r.status).not.toBe(0);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^polysift: nothing usable: all 3 block\(s\) were rejected \(first: .*nocell/);
    expect(existsSync(join(out, 'structures.csv'))).toBe(false);
  }, 30000);

  it('exits non-zero with one line for an energies file without the energy column', () => {
    writeFileSync(join(dir, 'nocol.csv'), 'id,value\nx,1\n');
    const r = polysift(['sift', join(dir, 'run.cif'), '--energies', join(dir, 'nocol.csv'), '--out', join(dir, 'o3'), '--quiet']);
    expect(r.status).not.toBe(0);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/no column 'energy'.*--energy-column/);
    expect(readdirSync(dir)).not.toContain('o3');
  }, 30000);

  it('stops with one line and writes nothing when not one energy can be read, instead of sifting in input order', () => {
    // What a spreadsheet in a decimal-comma locale writes when told to use commas between columns.
    const bad = ['id,energy', ...gen.ids.map((id, i) => `${id},"${gen.energiesKjPerMol[i].toFixed(3).replace('.', ',')}"`)].join('\n');
    writeFileSync(join(dir, 'comma.csv'), `${bad}\n`);
    const out = join(dir, 'o-comma');
    const r = polysift(['sift', join(dir, 'run.cif'), '--energies', join(dir, 'comma.csv'), '--out', out, '--quiet']);
    expect(r.status).not.toBe(0);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^polysift: .*comma.csv: no energy could be read: line 2 has '-?\d+,\d{3}' in column 'energy'; numbers with a decimal comma need a file separated by semicolons/);
    expect(existsSync(out)).toBe(false);
  }, 30000);

  it('reads energies from a semicolon file with decimal commas exactly as from the plain CSV', () => {
    const semi = ['id;energy', ...gen.ids.map((id, i) => `${id};${gen.energiesKjPerMol[i].toFixed(4).replace('.', ',')}`)].join('\n');
    writeFileSync(join(dir, 'semi.csv'), `${semi}\n`);
    writeFileSync(join(dir, 'good.cif'), gen.cif);
    const read = (energies: string, out: string) => {
      const r = polysift(['sift', join(dir, 'good.cif'), '--energies', join(dir, energies), '--out', join(dir, out), '--quiet', '--threads', '1']);
      expect(r.status).toBe(0);
      return Papa.parse<Record<string, string>>(readFileSync(join(dir, out, 'structures.csv'), 'utf8'), { header: true, skipEmptyLines: true }).data;
    };
    const fromPlain = read('energies.csv', 'o-plain');
    const fromSemi = read('semi.csv', 'o-semi');
    // Energies are written in kJ/mol to 0.0001, in shortest form (the tables' convention since issue 13).
    const withEnergy = fromSemi.filter((x) => x.energy_kj_per_mol !== '');
    expect(withEnergy).toHaveLength(gen.ids.length);
    expect(fromSemi.map((x) => x.energy_kj_per_mol)).toEqual(gen.energiesKjPerMol.map((e) => String(Number(e.toFixed(4)))));
    // Rows with an energy in both runs agree exactly (the plain file had three structures without one).
    fromPlain.forEach((x, i) => { if (x.energy_kj_per_mol !== '' && !x.reason.includes('different')) expect(x.energy_kj_per_mol).toBe(fromSemi[i].energy_kj_per_mol); });
  }, 60000);

  it('says a UTF-16 CIF file is UTF-16 text and how to convert it, not binary data', () => {
    const text = gen.cif.split('\ndata_').slice(0, 2).join('\ndata_');
    writeFileSync(join(dir, 'unicode.cif'), Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, 'utf16le')]));
    writeFileSync(join(dir, 'unicode-nobom.cif'), Buffer.from(text, 'utf16le'));
    const out = join(dir, 'o-utf16');
    const r = polysift(['sift', join(dir, 'unicode.cif'), join(dir, 'unicode-nobom.cif'), join(dir, 'good.cif'), '--out', out, '--quiet', '--threads', '1']);
    expect(r.status).toBe(0);
    const csv = Papa.parse<Record<string, string>>(readFileSync(join(out, 'structures.csv'), 'utf8'), { header: true, skipEmptyLines: true }).data;
    const rejected = csv.filter((x) => x.status === 'rejected');
    expect(rejected.map((x) => x.file)).toEqual([join(dir, 'unicode.cif'), join(dir, 'unicode-nobom.cif')]);
    for (const x of rejected) {
      expect(x.reason).toMatch(/the file is UTF-16LE text; polysift reads CIF files as UTF-8 .*iconv -f UTF-16 -t UTF-8/);
      expect(x.reason).not.toMatch(/binary/);
    }
  }, 30000);
});
