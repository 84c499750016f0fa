// `polysift distance`: EMD and AMD distance between structures read from CIF files (invented cubic crystals).
// Expected values: in the simple cubic lattice of edge a every point has 6 neighbours at a, then 12 at a*sqrt(2)
// (shell counts: OEIS A005875). A one-point cell gives a one-row PDD, so the EMD between two such lattices is the
// L-infinity distance of the rows (definition of EMD, Rubner et al. IJCV 2000): for edges 3.0 and 3.1 Å it is
// 0.1 Å at k = 6 and 0.1*sqrt(2) Å at k = 18. A supercell describes the same crystal, so its PDD and the EMD to
// the primitive cell are unchanged ("Resolving the data ambiguity for periodic crystals", NeurIPS 2022).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { distanceReport, formatDistanceText } from '../src/commands/distance.js';

function cubicBlock(name: string, a: number, sites: Array<[number, number, number]>, cellX = a): string {
  return [
    `data_${name}`,
    `_cell_length_a ${cellX}`,
    `_cell_length_b ${a}`,
    `_cell_length_c ${a}`,
    '_cell_angle_alpha 90',
    '_cell_angle_beta 90',
    '_cell_angle_gamma 90',
    'loop_',
    '_atom_site_label',
    '_atom_site_type_symbol',
    '_atom_site_fract_x',
    '_atom_site_fract_y',
    '_atom_site_fract_z',
    ...sites.map((s, i) => `Ar${i + 1} Ar ${s[0]} ${s[1]} ${s[2]}`),
    '',
  ].join('\n');
}

const dir = mkdtempSync(join(tmpdir(), 'polysift-distance-'));
const pairFile = join(dir, 'pair.cif');
writeFileSync(pairFile, cubicBlock('edge_3.0', 3, [[0, 0, 0]]) + cubicBlock('edge_3.1', 3.1, [[0, 0, 0]]));
const supercellFile = join(dir, 'supercell.cif');
writeFileSync(supercellFile, cubicBlock('edge_3.0_doubled', 3, [[0, 0, 0], [0.5, 0, 0]], 6));
const brokenFile = join(dir, 'broken.cif');
writeFileSync(brokenFile, 'data_no_sites\n_cell_length_a 5\n_cell_length_b 5\n_cell_length_c 5\n');

const cli = join(process.cwd(), 'src', 'cli.ts');
const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const polysift = (args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8' });

describe('distance', () => {
  it('gives the L-infinity row distance for one-point cubic cells (shells of OEIS A005875)', async () => {
    const r6 = await distanceReport([pairFile], { k: 6, hydrogens: 'keep', threads: 1 });
    expect(r6.structures.map((s) => s.id)).toEqual(['edge_3.0', 'edge_3.1']);
    expect(r6.emdAngstrom[0][1]).toBeCloseTo(0.1, 9);
    expect(r6.amdDistanceAngstrom[0][1]).toBeCloseTo(0.1, 9);
    const r18 = await distanceReport([pairFile], { k: 18, hydrogens: 'keep', threads: 1 });
    expect(r18.emdAngstrom[0][1]).toBeCloseTo(0.1 * Math.SQRT2, 9);
    expect(r18.emdAngstrom[1][0]).toBe(r18.emdAngstrom[0][1]);
    expect(r18.emdAngstrom[0][0]).toBe(0);
  });

  it('gives the matrix for more structures, with a supercell at EMD 0 from its primitive cell', async () => {
    const r = await distanceReport([pairFile, supercellFile], { k: 18, hydrogens: 'keep', threads: 1 });
    expect(r.structures.map((s) => s.id)).toEqual(['edge_3.0', 'edge_3.1', 'edge_3.0_doubled']);
    expect(r.emdAngstrom[0][2]).toBeLessThan(1e-9);
    expect(r.emdAngstrom[1][2]).toBeCloseTo(0.1 * Math.SQRT2, 9);
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        expect(r.emdAngstrom[i][j]).toBe(r.emdAngstrom[j][i]);
        expect(r.amdDistanceAngstrom[i][j]).toBeLessThanOrEqual(r.emdAngstrom[i][j] + 1e-12);
      }
    }
    const text = formatDistanceText(r);
    expect(text).toContain('EMD (Å), PDD depth k = 18');
    expect(text).toContain('[3] edge_3.0_doubled');
  });

  it('prints the pair from the command line, as text and as JSON, and lists an unusable block', () => {
    const t = polysift(['distance', pairFile, brokenFile, '-k', '18', '--threads', '1']);
    expect(t.status).toBe(0);
    expect(t.stdout).toContain('EMD            0.141421 Å');
    expect(t.stdout).toContain('AMD distance   0.141421 Å');
    expect(t.stdout).toMatch(/rejected: .*broken\.cif#no_sites, line 1: /);
    const j = polysift(['distance', pairFile, '--json', '-k', '6', '--threads', '1']);
    expect(j.status).toBe(0);
    const report = JSON.parse(j.stdout);
    expect(report.k).toBe(6);
    expect(report.emdAngstrom[0][1]).toBeCloseTo(0.1, 9);
  });

  it('refuses with one clear line when fewer than two structures can be used', () => {
    const r = polysift(['distance', supercellFile, brokenFile, '--threads', '1']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/^polysift: distance needs at least two usable structures, found 1 in .*; rejected: .*no_sites/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    const bad = polysift(['distance', pairFile, '-k', 'ten']);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toContain('-k must be a whole number');
  });
});
