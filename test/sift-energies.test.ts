// Energies CSV reading and unit conversion. Conversion factors: thermochemical calorie 4.184 J (NIST SP 811,
// 2008); e x N_A = 96.485 332 12 kJ/mol per eV (CODATA 2018).
import { describe, expect, it } from 'vitest';
import { assignEnergies, convertEnergy, decodeEnergyFile, energySummary, parseEnergyAmount, parseEnergyCsv, parseEnergyUnit } from '../src/io/energies.js';
import { utf16Kind } from '../src/io/text-encoding.js';

describe('energy units', () => {
  it('converts kcal/mol and eV to kJ/mol with the stated constants', () => {
    expect(convertEnergy(1, 'kcal/mol', 'kJ/mol')).toBe(4.184);
    expect(convertEnergy(1, 'eV', 'kJ/mol')).toBeCloseTo(96.48533212, 10);
    expect(convertEnergy(96.48533212, 'kJ/mol', 'eV')).toBeCloseTo(1, 12);
    expect(convertEnergy(4.184, 'kJ/mol', 'kcal/mol')).toBeCloseTo(1, 12);
  });
  it('reads units and amounts as typed', () => {
    expect(parseEnergyUnit('KJ/MOL')).toBe('kJ/mol');
    expect(parseEnergyUnit('kcal')).toBe('kcal/mol');
    expect(() => parseEnergyUnit('hartree')).toThrow(/kJ\/mol, kcal\/mol or eV/);
    expect(parseEnergyAmount('10', 'kJ/mol')).toBe(10);
    expect(parseEnergyAmount('1 kcal/mol', 'kJ/mol')).toBe(4.184);
    expect(parseEnergyAmount('4.184kJ/mol', 'kcal/mol')).toBeCloseTo(1, 12);
    expect(() => parseEnergyAmount('ten', 'kJ/mol')).toThrow(/not an energy/);
  });
});

describe('energies CSV', () => {
  const csv = ['name,E_latt', 'a,-10.5', 'b,oops', 'c,-9', 'c,-9', 'd,-8', 'd,-7.5', 'ghost,-1', ',-3', 'e,'].join('\n');

  it('reports every bad row and matches the rest, with changed column names', () => {
    const t = parseEnergyCsv(csv, 'e.csv', { idColumn: 'name', energyColumn: 'e latt' });
    expect(t.energies.get('a')).toBe(-10.5);
    expect(t.energies.get('c')).toBe(-9);
    expect(t.energies.has('b')).toBe(false);
    expect(t.energies.has('d')).toBe(false);
    expect(t.conflicts.has('d')).toBe(true);
    expect(t.issues.map((i) => [i.line, i.id])).toEqual([
      [3, 'b'],
      [5, 'c'],
      [7, 'd'],
      [9, ''],
      [10, 'e'],
    ]);
    const a = assignEnergies(['a', 'b', 'c', 'd', 'e', 'f'], t);
    expect(a.energy).toEqual([-10.5, null, -9, null, null, null]);
    expect(a.problem[1]).toMatch(/line 3: energy 'oops' is not a number/);
    expect(a.problem[2]).toMatch(/listed 2 times .* same energy/);
    expect(a.problem[3]).toMatch(/different energies/);
    expect(a.problem[5]).toMatch(/not found in e.csv/);
    expect(a.unmatched).toEqual([{ line: 8, id: 'ghost', issue: 'id matches no structure in the inputs' }]);
    const summary = energySummary(t, a).join('\n');
    expect(summary).toMatch(/4 structure\(s\) have no energy/);
    expect(summary).toMatch(/1 id\(s\) in e.csv match no structure: ghost/);
  });

  it('gives no energy to structures that share an id, since the CSV cannot tell them apart', () => {
    const t = parseEnergyCsv('id,energy\nglobal,-5\nsolo,-6\n', 'e.csv');
    const a = assignEnergies(['global', 'solo', 'global'], t);
    expect(a.energy).toEqual([null, -6, null]);
    expect(a.problem[0]).toMatch(/no energy: the id is shared by 2 structures in the inputs, so e.csv cannot tell them apart/);
    expect(a.problem[1]).toBe('');
    expect(energySummary(t, a).join('\n')).toMatch(/2 structure\(s\) share their id with another input structure/);
  });

  it('names the file and the missing column in one line', () => {
    expect(() => parseEnergyCsv('id,value\na,1\n', 'x.csv')).toThrow(/^x.csv: no column 'energy' in the header \(columns: 'id', 'value'\)/);
    expect(() => parseEnergyCsv('', 'x.csv')).toThrow(/empty/);
  });

  it('gives a structure whose block name is shared the energy listed under its own id, and none for the shared name', () => {
    const t = parseEnergyCsv('id,energy\nrun~1,-5\nrun,-7\nsolo,-6\n', 'e.csv');
    // Ids as sift gives them (src/landscape/unique-ids.ts), block names beside them.
    const a = assignEnergies(['run~1', 'solo', 'run~2'], t, ['run', 'solo', 'run']);
    expect(a.energy).toEqual([-5, -6, null]);
    expect(a.problem[2]).toMatch(/the id is shared by 2 structures .* \(block name run\); list each one by its id \(this one is run~2\)/);
    // The shared name matched input blocks, so it is not reported as matching no structure.
    expect(a.unmatched).toEqual([]);
  });
});

describe('energies as spreadsheets export them', () => {
  const plain = 'id,energy\ncand-1,-95.125\ncand-2,-94.5\ncand-3,-1.25e2\ncand-4,-93\n';
  const expected = new Map([['cand-1', -95.125], ['cand-2', -94.5], ['cand-3', -125], ['cand-4', -93]]);

  it('reads a semicolon-separated file with decimal commas exactly as the plain CSV', () => {
    const semicolon = 'id;energy\ncand-1;-95,125\ncand-2;-94,5\ncand-3;-1,25e2\ncand-4;-93\n';
    expect(parseEnergyCsv(plain, 'p.csv').energies).toEqual(expected);
    expect(parseEnergyCsv(semicolon, 's.csv').energies).toEqual(expected);
    // Tabs too, with decimal points or commas; the value read is the same number.
    expect(parseEnergyCsv('id\tenergy\ncand-1\t-95,125\ncand-2\t-94.5\ncand-3\t-1.25e2\ncand-4\t-93\n', 't.csv').energies).toEqual(expected);
  });

  it('does not take a comma for a decimal point in a comma-separated file', () => {
    const t = parseEnergyCsv('id,energy\na,"-95,5"\nb,-94.5\n', 'c.csv');
    expect(t.energies.has('a')).toBe(false);
    expect(t.issues[0].issue).toMatch(/'-95,5' is not a number/);
  });

  it('stops in one line showing the first bad value and what to change when no energy can be read', () => {
    expect(() => parseEnergyCsv('id,energy\na,"-95,5"\nb,"-94,1"\n', 'c.csv')).toThrow(
      /^c.csv: no energy could be read: line 2 has '-95,5' in column 'energy'; numbers with a decimal comma need a file separated by semicolons/,
    );
    expect(() => parseEnergyCsv('id,energy\na,low\nb,high\n', 'w.csv')).toThrow(/^w.csv: no energy could be read: line 2 has 'low' in column 'energy'; .*--energy-column/);
    expect(() => parseEnergyCsv('id,energy\na,\n', 'e.csv')).toThrow(/^e.csv: no energy could be read: line 2 has nothing in column 'energy'/);
    expect(() => parseEnergyCsv('id,energy\na,"1 234,5"\n', 'k.csv')).toThrow(/no thousands separators/);
    for (const f of ['id,energy\na,"-95,5"\n', 'id,energy\na,low\n']) {
      expect(() => parseEnergyCsv(f, 'x.csv')).toThrow(/^[^\n]+$/);
    }
  });

  it('reads UTF-16 text (with or without a byte-order mark) and says which it was', () => {
    const le = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(plain.replace(/,/g, '\t'), 'utf16le')]);
    const be = Buffer.from(Buffer.from(plain, 'utf16le')).swap16();
    expect(utf16Kind(le)).toBe('UTF-16LE');
    expect(utf16Kind(be)).toBe('UTF-16BE');
    expect(utf16Kind(Buffer.from(plain, 'utf8'))).toBeNull();
    for (const [bytes, enc] of [[le, 'UTF-16LE'], [be, 'UTF-16BE'], [Buffer.from(`\uFEFF${plain}`, 'utf8'), 'UTF-8']] as const) {
      const d = decodeEnergyFile(bytes);
      expect(d.encoding).toBe(enc);
      expect(parseEnergyCsv(d.text, 'u.csv').energies).toEqual(expected);
    }
  });
});
