// Energies CSV reading and unit conversion. Conversion factors: thermochemical calorie 4.184 J (NIST SP 811,
// 2008); e x N_A = 96.485 332 12 kJ/mol per eV (CODATA 2018).
import { describe, expect, it } from 'vitest';
import { assignEnergies, convertEnergy, energySummary, parseEnergyAmount, parseEnergyCsv, parseEnergyUnit } from '../src/io/energies.js';

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
});
