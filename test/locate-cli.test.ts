// `polysift locate` through the real command line on a landscape built from generated crystals
// (src/demo/landscape.ts, truth from the generator): a planted reference is reported found, an unreadable block is
// named on stderr without stopping the run, and asking to drop hydrogens against a landscape made with them is
// refused in one line when the landscape's unique.cif is missing (with it, test/locate-experimental.test.ts).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generateLandscape } from '../src/demo/landscape.js';
import { readCifText } from '../src/io/read.js';
import { referenceInvariants } from '../src/landscape/references.js';
import { landscapeOf, type SyntheticStructure } from './diff-fixtures.js';
import type { CrystalRecord } from '../src/types.js';
import { cellVolume } from '../src/geometry/cell.js';

const cli = join(process.cwd(), 'src', 'cli.ts');
const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const polysift = (args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8' });

const K = 20;
const g = generateLandscape({ seed: 4, packings: 3, copiesPerPacking: 2, closePairs: 0, squeezeMoves: 200 });
const recs: CrystalRecord[] = readCifText(g.cif, 'gen.cif').map((r) => {
  if (r.kind !== 'record') throw new Error(r.rejected.reason);
  return r.record;
});
const copy = (p: number, kind: string) => recs[g.ids.findIndex((_id, i) => g.truth[i] === p && g.kinds[i] === kind)];
const kept: SyntheticStructure[] = [0, 1, 2].map((p) => {
  const rec = copy(p, 'standard');
  const inv = referenceInvariants(rec, K, 'keep');
  const volume = cellVolume(rec.cell);
  return {
    id: rec.id, pdd: { rows: Array.from(inv.pdd.rows), weights: Array.from(inv.pdd.weights) }, energy: g.energiesKjPerMol[g.ids.indexOf(rec.id)],
    densityGPerCm3: inv.densityGPerCm3 as number, cell: { ...rec.cell, volume }, atoms: Math.round(volume / (inv.volumePerAtomA3 as number)), composition: inv.composition,
  };
});
const root = mkdtempSync(join(tmpdir(), 'polysift-locate-cli-'));
const land = join(root, 'run');
mkdirSync(land);
writeFileSync(join(land, 'landscape.json'), JSON.stringify(landscapeOf(kept, K, { toleranceAngstrom: 0.05 })));
const refs = join(root, 'known.cif');
writeFileSync(refs, `${copy(1, 'other-cell').text}\ndata_unfinished\n_cell_length_a 7.1\n`);

describe('polysift locate (command line)', () => {
  it('reports the planted reference found, names the unusable block and writes its files', () => {
    const out = join(root, 'out');
    const r = polysift(['locate', refs, '--in', land, '--out', out, '--threads', '1']);
    expect(r.status).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toMatch(new RegExp(`^${copy(1, 'other-cell').id}: found as ${copy(1, 'standard').id} \\(scale-free EMD 0\\.0\\d+ Å, EMD 0\\.0\\d+ Å, scale 1\\.000\\d, energy rank \\d.*: within the tolerance \\(`));
    expect(r.stderr).toMatch(/reference .*known\.cif#unfinished \(line \d+\) not used: .*_cell_length_b/);
    for (const f of ['locate.json', 'locate.csv', 'report.html']) expect(existsSync(join(out, f))).toBe(true);
    const result = JSON.parse(readFileSync(join(out, 'locate.json'), 'utf8'));
    expect(result.references.length).toBe(1);
    expect(result.unusable.length).toBe(1);
  });

  it('needs the unique.cif beside the landscape to leave hydrogens out against a landscape sifted with them, and says so in one line', () => {
    const r = polysift(['locate', refs, '--in', land, '--hydrogens', 'drop']);
    expect(r.status).toBe(1);
    expect(r.stderr).toBe(
      `polysift: ${join(land, 'landscape.json')} was sifted with hydrogens kept; comparing with hydrogens dropped needs its unique.cif, which is not in ${land}\n`,
    );
  });
});
