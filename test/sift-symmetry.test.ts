// The space group and Z' polysift reports are the crystal's, not the file's (issue 11): on a generated landscape
// whose minima are written as a search writes them (P1, P1 supercells, other cells and settings), every kept
// structure reports the group it was generated in with Z' = 1, the file's group is kept beside it with a note,
// each kept structure lists the groups its members were written in, and detection that cannot be trusted falls
// back to the declared group with a note. The group each copy was generated in is the truth here; detection
// itself is checked against spglib in geometry-detect-symmetry.test.ts.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { generateLandscape, ALL_GROUPS } from '../src/demo/landscape.js';
import { IT_NUMBER, type GeneratedGroup } from '../src/demo/space-groups.js';
import { sift } from '../src/landscape/sift.js';
import { siftFiles } from '../src/landscape/sift-files.js';
import { validateLandscape } from '../src/landscape/load.js';
import { readCifText } from '../src/io/read.js';
import { crystalFacts } from '../src/geometry/facts.js';
import { crystalSymmetry } from '../src/geometry/crystal-symmetry.js';
import { expandSites } from '../src/geometry/periodic-set.js';
import { groupSymbol } from '../src/geometry/space-group-table.js';
import { inspectInputs } from '../src/commands/inspect.js';
import { referenceInvariants } from '../src/landscape/references.js';
import type { CrystalRecord } from '../src/types.js';

const GROUPS: GeneratedGroup[] = [...ALL_GROUPS, 'Pna21'];
const gen = generateLandscape({ seed: 21, packings: 21, copiesPerPacking: 6, closePairs: 0, spaceGroups: GROUPS, squeezeMoves: 150 });
const dir = mkdtempSync(join(tmpdir(), 'polysift-symmetry-'));
const cif = join(dir, 'search.cif');
const energies = join(dir, 'energies.csv');
writeFileSync(cif, gen.cif);
writeFileSync(energies, gen.energiesCsv);

function recordsOf(text: string): CrystalRecord[] {
  return readCifText(text, 'test.cif').map((b) => {
    if (b.kind !== 'record') throw new Error(b.rejected.reason);
    return b.record;
  });
}

describe('sift reports the space group each structure has', async () => {
  const cacheDir = join(dir, 'cache');
  const run = await sift({ inputs: [cif], energiesFile: energies, threads: 2, cacheDir });
  const l = run.landscape;
  const truthOf = (index: number) => gen.packings[gen.truth[index]].group;

  it('every kept structure reports the group it was generated in, with Z\' = 1, whatever it was written in', () => {
    expect(l.counts.kept).toBe(21);
    const keptKinds = l.kept.map((k) => gen.kinds[k]);
    // The lowest copy of a minimum is often one written in P1 or in a P1 supercell.
    expect(keptKinds.filter((k) => k.startsWith('p1')).length).toBeGreaterThan(3);
    for (const k of l.kept) {
      const r = l.structures[k];
      expect(r.spaceGroup, `${r.id} (${gen.kinds[k]})`).toBe(groupSymbol(IT_NUMBER[truthOf(k)]));
      expect(r.symmetry).toMatchObject({ source: 'detected', number: IT_NUMBER[truthOf(k)] });
      expect(r.zPrime).toBe(1);
      // Z per conventional cell: the number of general positions of the group (International Tables Vol. A).
      const z: Record<GeneratedGroup, number> = { 'P21/c': 4, 'P-1': 2, P212121: 4, 'C2/c': 8, P21: 2, Pbca: 8, Pna21: 4 };
      expect(r.z).toBe(z[truthOf(k)]);
    }
    // Duplicates too.
    for (const r of l.structures) expect(r.spaceGroup, r.id).toBe(groupSymbol(IT_NUMBER[truthOf(r.index)]));
  });

  it('keeps the declared group in its own field and says where it differs', () => {
    for (const r of l.structures) {
      const kind = gen.kinds[r.index];
      if (kind === 'p1' || kind === 'p1-supercell') {
        expect(r.symmetry!.declared).toBe('P1');
        expect(r.symmetry!.note).toBe(`written in P1; ${r.spaceGroup} within 0.06 Å` + (kind === 'p1-supercell' ? '; the given cell is a 2-fold supercell of the conventional cell' : ''));
        expect(r.notes).toContain(r.symmetry!.note);
        expect(r.symmetry!.declaredZPrime).toBe(kind === 'p1' ? r.z : 2 * r.z!);
      } else {
        expect(r.symmetry!.note).toBeNull();
        expect(r.symmetry!.declaredZPrime).toBe(1);
      }
    }
  });

  it('lists per kept structure the groups its members were written in', () => {
    for (const k of l.kept) {
      const r = l.structures[k];
      const members = l.structures.filter((s) => s.keptIndex === k);
      expect(r.writtenIn.reduce((n, e) => n + e.count, 0)).toBe(r.members);
      const counted = new Map<string, number>();
      for (const m of members) counted.set(m.symmetry!.declared!, (counted.get(m.symmetry!.declared!) ?? 0) + 1);
      expect(new Map(r.writtenIn.map((e) => [e.spaceGroup, e.count]))).toEqual(counted);
      // P21/c copies are written in P21/c, P21/n, P21/a and P1.
      if (r.spaceGroup === 'P21/c') expect(r.writtenIn.map((e) => e.spaceGroup)).toContain('P1');
    }
  });

  it('writes the detected group, the declared one and the note in the CSVs and landscape.json', () => {
    const files = new Map(siftFiles(run, { report: false }));
    const rows = Papa.parse<Record<string, string>>(files.get('structures.csv')!, { header: true, skipEmptyLines: true }).data;
    const p1 = rows.find((x) => gen.kinds[gen.ids.indexOf(x.id)] === 'p1')!;
    expect(p1.space_group_declared).toBe('P1');
    expect(p1.space_group_source).toBe('detected');
    expect(p1.symmetry_note).toBe(`written in P1; ${p1.space_group} within 0.06 Å`);
    expect(p1.z_prime).toBe('1');
    const unique = Papa.parse<Record<string, string>>(files.get('unique.csv')!, { header: true, skipEmptyLines: true }).data;
    for (const u of unique) {
      const r = l.structures[gen.ids.indexOf(u.id)];
      expect(u.written_in).toBe(r.writtenIn.map((e) => `${e.spaceGroup} x ${e.count}`).join('; '));
      expect(u.space_group).toBe(r.spaceGroup);
    }
    const json = JSON.parse(files.get('landscape.json')!);
    expect(json.parameters.symmetryToleranceAngstrom).toBe(0.06);
    expect(json.structures[p1 ? gen.ids.indexOf(p1.id) : 0].symmetry.hall).toMatch(/^-?[PC] /);
  });

  it('a re-run with another symmetry tolerance keeps the cached invariants and recomputes the symmetry', async () => {
    const tight = await sift({ inputs: [cif], energiesFile: energies, threads: 2, cacheDir, symmetryToleranceAngstrom: 0.001 });
    expect(tight.cache.hits).toBe(gen.ids.length);
    expect(tight.landscape.parameters.symmetryToleranceAngstrom).toBe(0.001);
    // Noisy P1 copies lose their symmetry at 0.001 Å; their files' own group (P1) is reported.
    const p1 = tight.landscape.structures.filter((r) => gen.kinds[r.index] === 'p1');
    expect(p1.length).toBeGreaterThan(0);
    for (const r of p1) expect(r.spaceGroup).toBe('P1');
    // Copies written with their operations keep them exactly.
    for (const r of tight.landscape.structures.filter((s) => gen.kinds[s.index] === 'standard')) expect(r.spaceGroup).toBe(groupSymbol(IT_NUMBER[truthOf(r.index)]));
    // And back: the cache now holds the tight facts, the default tolerance computes them again.
    const again = await sift({ inputs: [cif], energiesFile: energies, threads: 2, cacheDir });
    expect(again.landscape.structures.map((r) => r.spaceGroup)).toEqual(l.structures.map((r) => r.spaceGroup));
  });

  it('reads landscapes written before rows carried their symmetry', () => {
    const old = JSON.parse(JSON.stringify(l));
    for (const r of old.structures) {
      delete r.symmetry;
      delete r.writtenIn;
    }
    const back = validateLandscape(old, 'old landscape.json');
    expect(back.structures[0].symmetry).toBeNull();
    expect(back.structures[0].writtenIn).toEqual([]);
  });
});

describe('detection that cannot be trusted falls back to the declared group, with a note', () => {
  const standard = recordsOf(gen.cif).find((_, i) => gen.kinds[i] === 'standard' && truthOf(i) === 'P21/c')!;
  function truthOf(i: number): GeneratedGroup {
    return gen.packings[gen.truth[i]].group;
  }

  it('disordered sites: the declared group is reported', () => {
    // The same block with one hydrogen site at half occupancy.
    const text = standard.text.replace(/^(H\d+ H \S+ \S+ \S+)$/m, '$1 0.5').replace('_atom_site_fract_z\n', '_atom_site_fract_z\n_atom_site_occupancy\n');
    const lines = text.split('\n').map((line) => (/^[A-Z][a-z]?\d+ [A-Z][a-z]? \S+ \S+ \S+$/.test(line) ? `${line} 1` : line));
    const f = crystalFacts(recordsOf(lines.join('\n'))[0]);
    expect(f.symmetry.source).toBe('declared');
    expect(f.symmetry.symbol).toBe('P21/c');
    expect(f.symmetry.note).toMatch(/^disordered sites: P21\/c as declared is reported/);
  });

  it('hydrogen sites missing from a formula that has them: the declared group is reported', () => {
    const text = standard.text
      .split('\n')
      .filter((line) => !/^H\d+ H /.test(line))
      .join('\n')
      .replace('_cell_length_a', "_chemical_formula_sum 'C3 H4 N2 O2'\n_cell_length_a");
    const f = crystalFacts(recordsOf(text)[0]);
    expect(f.symmetry.source).toBe('declared');
    expect(f.symmetry.note).toMatch(/^hydrogen sites missing/);
  });

  it('a tolerance too tight for the file\'s own coordinates: the declared group is reported', () => {
    // P-1 with a nitrogen 0.02 Å off an inversion centre: the reader merges it with its image (within 0.1 Å),
    // so the expanded atom sits 0.04 Å from its own image; 0.01 Å cannot find the file's inversion.
    const text = `data_offcentre\n_cell_length_a 10\n_cell_length_b 11\n_cell_length_c 12\n_cell_angle_alpha 90\n_cell_angle_beta 100\n_cell_angle_gamma 90\n` +
      `_space_group_name_H-M_alt 'P -1'\nloop_\n_space_group_symop_operation_xyz\nx,y,z\n-x,-y,-z\n` +
      `loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n` +
      `N1 N 0.002 0 0\nC1 C 0.21 0.13 0.17\nO1 O 0.33 0.41 0.05\n`;
    const record = recordsOf(text)[0];
    expect(crystalFacts(record).symmetry).toMatchObject({ source: 'detected', symbol: 'P-1' });
    const tight = crystalFacts(record, { symmetryToleranceAngstrom: 0.01 }).symmetry;
    expect(tight).toMatchObject({ source: 'declared', symbol: 'P-1', declared: 'P-1' });
    expect(tight.note).toMatch(/^the file's own 2 operations are not all found within 0.01 Å/);
  });

  it('detection failure: the declared group is reported with the reason', () => {
    const ex = expandSites(standard, standard.sites.map((_, i) => i));
    const frac = Float64Array.from(ex.frac);
    frac[0] = Number.NaN;
    const r = crystalSymmetry(standard, { basis: ex.basis, frac, types: ex.atomicNumbers }, 4, { disordered: false, missingHydrogens: false, overlaps: 0 }, 0.06);
    expect(r.symmetry).toMatchObject({ source: 'declared', symbol: 'P21/c', zPrime: 1 });
    expect(r.symmetry.note).toBe('symmetry not detected within 0.06 Å (an atom has coordinates that are not numbers); P21/c as declared is reported');
  });
});

describe('inspect shows the detected group with its Hall symbol and cells, and the declared one', () => {
  it('for a copy written in a P1 supercell', async () => {
    const i = gen.kinds.findIndex((k, j) => k === 'p1-supercell' && gen.packings[gen.truth[j]].group === 'P21/c');
    const file = join(dir, 'one.cif');
    writeFileSync(file, recordsOf(gen.cif)[i].text);
    const report = await inspectInputs([file], { hydrogens: 'keep' });
    const e = report.structures[0];
    expect(e.spaceGroup).toBe('P21/c');
    expect(e.spaceGroupAsWritten).toBe('P 1');
    expect(e.z).toBe(4);
    expect(e.zPrime).toBe(1);
    expect(e.moleculesPerCell).toBe(8);
    expect(e.detected).toMatchObject({ number: 14, hall: '-P 2ybc', hm: 'P 1 21/c 1', full: 'P 1 21/c 1', pointGroup: '2/m', crystalSystem: 'monoclinic', latticePointsPerCell: 2 });
    expect(e.detected!.operations.length).toBe(8);
    expect(e.detected!.operations[0]).toBe('x,y,z');
    expect(e.symmetry.note).toBe('written in P1; P21/c within 0.06 Å; the given cell is a 2-fold supercell of the conventional cell');
  });
});

describe('locate reports the group a reference has', () => {
  it('a reference written in P1 is reported in the group it was generated in, with Z\' = 1', () => {
    const i = gen.kinds.findIndex((k, j) => k === 'p1' && gen.packings[gen.truth[j]].group === 'Pbca');
    const ref = referenceInvariants(recordsOf(gen.cif)[i], 10, 'keep', 0.06);
    expect(ref.spaceGroup).toBe('Pbca');
    expect(ref.zPrime).toBe(1);
    expect(ref.notes).toContain('written in P1; Pbca within 0.06 Å');
  });
});
