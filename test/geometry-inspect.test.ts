import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { formatInspectText, inspectInputs, parseHydrogens, type InspectReport } from '../src/commands/inspect.js';

// Invented structures: a C2H2Cl2-like molecule on an inversion centre in P21/c (half listed), once with
// the operations listed and once with only the symbol; a block missing a cell length.
const HEADER = `_cell_length_a 8.30
_cell_length_b 9.60
_cell_length_c 10.40
_cell_angle_alpha 90
_cell_angle_beta 103.5
_cell_angle_gamma 90
`;
const SITES = `loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
C1 C 0.0825 0.0104 0.0049
Cl1 Cl 0.1963 0.1510 0.0296
H1 H 0.1325 -0.0885 0.0
`;
const CIF = `data_listed
${HEADER}_symmetry_space_group_name_H-M 'P 21/c'
loop_
_symmetry_equiv_pos_as_xyz
x,y,z
-x,y+1/2,-z+1/2
-x,-y,-z
x,-y+1/2,z+1/2
${SITES}
data_symbol_only
${HEADER}_symmetry_space_group_name_H-M 'P 1 21/c 1'
${SITES}
data_broken
_cell_length_a 5
`;

function writeInput(): string {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-inspect-'));
  const file = join(dir, 'invented.cif');
  writeFileSync(file, CIF);
  return file;
}

describe('inspect', () => {
  const file = writeInput();
  it('reports cell, symmetry, atoms, Z, Z\' and formulas per structure and lists the rejected block', async () => {
    const report = await inspectInputs([file], { hydrogens: 'keep' });
    expect(report.structures.map((s) => s.id)).toEqual(['listed', 'symbol_only']);
    for (const s of report.structures) {
      expect(s.operations).toBe(4);
      expect(s.atomsPerCell).toBe(12);
      expect(s.z).toBe(2);
      expect(s.zPrime).toBe(0.5);
      expect(s.formulas).toEqual(['C2H2Cl2']);
      expect(s.setPoints).toBe(12);
      expect(s.asymmetricUnitPoints).toBe(3);
      // V = a b c sin(beta) (monoclinic cell volume, common practice)
      expect(s.volumeA3).toBeCloseTo(8.3 * 9.6 * 10.4 * Math.sin((103.5 * Math.PI) / 180), 8);
    }
    expect(report.structures[0]!.operationsFrom).toBe('listed');
    expect(report.structures[1]!.operationsFrom).toBe('symbol');
    expect(report.structures[0]!.densityGPerCm3).toBeCloseTo(report.structures[1]!.densityGPerCm3, 12);
    expect(report.rejected).toHaveLength(1);
    expect(report.rejected[0]!.source).toBe(`${file}#broken`);
    expect(report.rejected[0]!.reason).toMatch(/_cell_length_b/);
    const text = formatInspectText(report);
    expect(text).toMatch(/2 structure\(s\) read, 1 rejected/);
    expect(text).toMatch(/Z' 0\.5/);
  });
  it('drops hydrogens from the periodic set only; density and Z stay those of the full structure', async () => {
    const keep = await inspectInputs([file], { hydrogens: 'keep' });
    const drop = await inspectInputs([file], { hydrogens: 'drop' });
    expect(drop.structures[0]!.setPoints).toBe(8);
    expect(drop.structures[0]!.densityGPerCm3).toBe(keep.structures[0]!.densityGPerCm3);
    expect(drop.structures[0]!.z).toBe(2);
    expect(drop.structures[0]!.notes.join(' ')).toMatch(/hydrogens dropped: 1 hydrogen site/);
  });
  it('runs from the command line with --json, and fails with one message when nothing is usable', () => {
    const cli = join(process.cwd(), 'src', 'cli.ts');
    const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
    const r = spawnSync(tsx, [cli, 'inspect', file, '--json', '--hydrogens', 'drop'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const report = JSON.parse(r.stdout) as InspectReport;
    expect(report.structures).toHaveLength(2);
    expect(report.structures[0]!.hydrogens).toBe('drop');
    const dir = mkdtempSync(join(tmpdir(), 'polysift-inspect-bad-'));
    const bad = join(dir, 'bad.cif');
    writeFileSync(bad, 'data_x\n_cell_length_a 5\n');
    const r2 = spawnSync(tsx, [cli, 'inspect', bad], { encoding: 'utf8' });
    expect(r2.status).not.toBe(0);
    expect(r2.stderr).toMatch(/no structure could be used/);
  });
  it('accepts only keep or drop for --hydrogens', () => {
    expect(parseHydrogens('keep')).toBe('keep');
    expect(parseHydrogens('drop')).toBe('drop');
    expect(() => parseHydrogens('maybe')).toThrow(/--hydrogens must be keep or drop, not 'maybe'/);
  });
  it('states the density with the hydrogens of _atom_site_attached_hydrogens too, and explains a stated density that counts them', async () => {
    // The same invented molecule written as X-ray files often are: no hydrogen sites, one hydrogen counted on C1.
    // Mass per cell: 4 x (C + Cl) listed, 4 x H attached (IUPAC 2021 abridged weights C 12.011, Cl 35.45, H 1.008);
    // density = mass / (N_A V), V = a b c sin(beta).
    const volume = 8.3 * 9.6 * 10.4 * Math.sin((103.5 * Math.PI) / 180);
    const toDensity = (mass: number): number => mass / (6.02214076e23 * volume * 1e-24);
    const without = toDensity(4 * (12.011 + 35.45));
    const withH = toDensity(4 * (12.011 + 35.45 + 1.008));
    const dir = mkdtempSync(join(tmpdir(), 'polysift-inspect-implicit-'));
    const implicit = join(dir, 'implicit.cif');
    writeFileSync(
      implicit,
      `data_implicit\n${HEADER}_symmetry_space_group_name_H-M 'P 1 21/c 1'\n_exptl_crystal_density_diffrn ${withH.toFixed(3)}\n` +
        `loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_attached_hydrogens\n` +
        `C1 C 0.0825 0.0104 0.0049 1\nCl1 Cl 0.1963 0.1510 0.0296 0\n`,
    );
    const report = await inspectInputs([implicit], { hydrogens: 'keep' });
    const s = report.structures[0]!;
    expect(s.densityGPerCm3).toBeCloseTo(without, 3);
    expect(s.densityWithAttachedHydrogensGPerCm3).toBeCloseTo(withH, 3);
    expect(s.attachedHydrogensPerCell).toBe(4);
    // The comparison uses the listed sites only: no hydrogen points in the periodic set.
    expect(s.setPoints).toBe(8);
    expect(s.notes.join(' ')).toMatch(
      /_exptl_crystal_density_diffrn says [\d.]+ g\/cm³, computed [\d.]+ g\/cm³: the stated value counts the 4 hydrogens per cell that _atom_site_attached_hydrogens puts on listed atoms/,
    );
    expect(formatInspectText(report)).toMatch(new RegExp(`density {7}${without.toFixed(4)} g/cm³; ${withH.toFixed(4)} g/cm³ with the 4 hydrogens per cell of _atom_site_attached_hydrogens`));
    // With hydrogen sites listed, attached hydrogens are not counted again.
    const report2 = await inspectInputs([file], { hydrogens: 'keep' });
    expect(report2.structures[0]!.densityWithAttachedHydrogensGPerCm3).toBeUndefined();
  });
});
