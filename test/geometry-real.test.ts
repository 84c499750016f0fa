import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readStructures } from '../src/io/read.js';
import { crystalFacts, numberItem } from '../src/geometry/facts.js';
import { toPeriodicSet } from '../src/geometry/periodic-set.js';
import type { CrystalFacts, CrystalRecord } from '../src/types.js';

// Real CIFs from Debian packages (Crystallography Open Database / AMCSD records; ids and packages in
// test/data/real/README.md). The stated values each file carries (_exptl_crystal_density_diffrn,
// _cell_formula_units_Z) are the reference; where they disagree the notes must say why.
const DIR = join(process.cwd(), 'test', 'data', 'real');

async function readAll(): Promise<Map<string, { record: CrystalRecord; facts: CrystalFacts }>> {
  const out = new Map<string, { record: CrystalRecord; facts: CrystalFacts }>();
  for await (const r of readStructures([DIR])) {
    if (r.kind !== 'record' || r.record.file.includes('damaged')) continue;
    const name = `${r.record.file.slice(DIR.length + 1)}#${r.record.block}`;
    out.set(name, { record: r.record, facts: crystalFacts(r.record) });
  }
  return out;
}

describe('crystal facts on real CIFs', async () => {
  const all = await readAll();
  const get = (name: string) => {
    const v = all.get(name);
    if (v === undefined) throw new Error(`test file block ${name} was not read`);
    return v;
  };

  it('reads the structure blocks of the real files', () => {
    expect(all.size).toBeGreaterThanOrEqual(50);
  });

  it('agrees with every stated density within 0.5 %, or says why in the notes', () => {
    let agree = 0;
    let explained = 0;
    for (const [name, { record, facts }] of all) {
      const stated = numberItem(record.text, '_exptl_crystal_density_diffrn');
      if (stated === null) continue;
      if (Math.abs(facts.densityGPerCm3 - stated) <= 0.005 * stated) agree++;
      else {
        const note = facts.notes.find((n) => n.startsWith('_exptl_crystal_density_diffrn says'));
        expect(note, name).toBeDefined();
        expect(note!, name).toMatch(/: \S/);
        explained++;
      }
    }
    // 20 acylurea blocks and most mineral files agree; kaolinite (no H sites), weddellite (water
    // occupancies) and ice VI (a water listed twice, no H sites) are inconsistent files.
    expect(agree).toBeGreaterThanOrEqual(35);
    expect(explained).toBe(3);
  });

  it('explains the three inconsistent files by their actual defect', () => {
    expect(get('kaolinite.cif#global').facts.notes.join(' ')).toMatch(/hydrogens are missing from the sites/);
    expect(get('weddellite.cif#9000764').facts.notes.join(' ')).toMatch(/with Z = 8 .* listed sites hold 7\.9\d\d formula units/);
    expect(get('ice-VI.cif#global').facts.notes.join(' ')).toMatch(/symmetry copies of others/);
  });

  it('finds the Z the files state for one-molecule structures', () => {
    // name, Z stated in the file (_cell_formula_units_Z) or in the record's publication, formula
    const cases: [string, number, string][] = [
      ['ferrocene.cif#2101932', 2, 'C10H10Fe'],
      ['ice-Ih.cif#1011023', 12, 'H2O'],
      ['cod-2104737.cif#2104737', 8, 'Si'],
      ['silicon-origin-choice-2.cif#2102763', 8, 'Si'],
      ['acylurea-phase-series.cif#ethyl98K', 2, 'C9H18N2O2'],
      ['acylurea-phase-series.cif#propyl298K', 2, 'C10H20N2O2'],
    ];
    for (const [name, z, formula] of cases) {
      const { record, facts } = get(name);
      expect(facts.z, name).toBe(z);
      expect(facts.formulas, name).toEqual([formula]);
      const stated = numberItem(record.text, '_cell_formula_units_z');
      if (stated !== null) expect(stated, name).toBe(z);
    }
    // ferrocene: only the symbol P 1 21/a 1 is given; the molecule sits on an inversion centre (Z' = 1/2)
    expect(get('ferrocene.cif#2101932').facts.zPrime).toBe(0.5);
  });

  it('counts molecules, not formula units, in co-crystals and solvates and says so', () => {
    const f = get('lidocaine-menthol.cif#1502677').facts;
    expect(f.z).toBe(8);
    expect([...f.formulas].sort()).toEqual(['C10H20O', 'C14H22N2O']);
    expect(f.notes.join(' ')).toMatch(/_cell_formula_units_Z says 4, the bond graph gives 8 molecules per cell \(2 molecules per formula unit/);
  });

  it('names the overlapping copies in the three-fold disordered caffeine model', () => {
    const f = get('caffeine.cif#2100202').facts;
    expect(f.notes.join(' ')).toMatch(/pair\(s\) of atoms closer than 0\.5 Å/);
    expect(f.notes.join(' ')).toMatch(/_chemical_formula_sum x _cell_formula_units_Z \(C8 H10 N4 O2 x 6\) gives 1\.452 g\/cm³/);
  });

  it('builds a periodic set for every structure read, with and without hydrogens', () => {
    for (const [name, { record }] of all) {
      const keep = toPeriodicSet(record, { hydrogens: 'keep' }).set;
      let mult = 0;
      for (const v of keep.multiplicity) mult += v;
      expect(mult, name).toBe(keep.atomicNumbers.length);
      const hasHeavy = record.sites.some((s) => s.element !== 'H');
      if (hasHeavy) expect(toPeriodicSet(record, { hydrogens: 'drop' }).set.atomicNumbers.every((z) => z !== 1), name).toBe(true);
    }
  });
});
