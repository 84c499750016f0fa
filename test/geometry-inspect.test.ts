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
});
