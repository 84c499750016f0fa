// `polysift inspect --json -k N` carries each structure's PDD and AMD. Checked on an fcc cell written
// as a 4-atom P1 CIF: the shells a/√2 (x12), a (x6), a·√(3/2) (x24) of OEIS A004015 (from memory;
// confirmed by direct count in invariants-pdd.test.ts).
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { inspectInputs } from '../src/commands/inspect.js';

const A = 4.0;
const CIF = `data_fcc_test
_cell_length_a ${A}
_cell_length_b ${A}
_cell_length_c ${A}
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
loop_
_symmetry_equiv_pos_as_xyz
x,y,z
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
Cu1 Cu 0 0 0
Cu2 Cu 0 0.5 0.5
Cu3 Cu 0.5 0 0.5
Cu4 Cu 0.5 0.5 0
`;

function expectedRow(k: number): number[] {
  const shells: Array<[number, number]> = [[A / Math.SQRT2, 12], [A, 6], [A * Math.sqrt(1.5), 24]];
  const row: number[] = [];
  for (const [d, c] of shells) for (let i = 0; i < c; i++) row.push(d);
  return row.slice(0, k);
}

describe('inspect --json with invariants', () => {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-inspect-'));
  const file = join(dir, 'fcc.cif');
  writeFileSync(file, CIF);

  it('gives one merged PDD row of weight 1 and the AMD, from the library call', async () => {
    const report = await inspectInputs([file], { hydrogens: 'drop', k: 30 });
    const s = report.structures[0];
    expect(s.pdd?.k).toBe(30);
    expect(s.pdd?.weights).toEqual([1]);
    const row = expectedRow(30);
    s.pdd?.rows[0].forEach((v, j) => expect(Math.abs(v - row[j])).toBeLessThan(1e-12));
    s.amd?.forEach((v, j) => expect(Math.abs(v - row[j])).toBeLessThan(1e-12));
  });

  it('takes -k from the command line and refuses a k that is not a whole number', () => {
    const root = fileURLToPath(new URL('..', import.meta.url));
    const cli = join(root, 'src/cli.ts');
    const tsx = join(root, 'node_modules/.bin/tsx');
    const ok = spawnSync(tsx, [cli, 'inspect', '--json', '-k', '18', file], { encoding: 'utf8', cwd: root });
    expect(ok.status, ok.stderr).toBe(0);
    const json = JSON.parse(ok.stdout) as { structures: Array<{ pdd: { k: number; rows: number[][] }; amd: number[] }> };
    expect(json.structures[0].pdd.k).toBe(18);
    expect(json.structures[0].amd.length).toBe(18);
    json.structures[0].amd.forEach((v, j) => expect(Math.abs(v - expectedRow(18)[j])).toBeLessThan(1e-12));
    const bad = spawnSync(tsx, [cli, 'inspect', '--json', '-k', '2.5', file], { encoding: 'utf8', cwd: root });
    expect(bad.status).not.toBe(0);
    expect(bad.stderr).toMatch(/-k must be a whole number/);
  });
});
