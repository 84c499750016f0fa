// loadLandscape: a sift output's landscape.json is read and checked against src/landscape/schema.ts; each fault
// gives one message naming the file and the field (project rule: bad input gets a clear message, never a crash).
import { mkdtempSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { energyRanks, loadLandscape } from '../src/landscape/load.js';
import { landscapeOf, pairedRuns } from './diff-fixtures.js';

const K = 6;
function sample() {
  const { A } = pairedRuns(1, K, 3, 2, 0, 0.004, 0.2);
  return landscapeOf(A, K);
}
function writeDir(content: string): string {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-load-'));
  writeFileSync(join(dir, 'landscape.json'), content);
  return dir;
}

describe('loadLandscape', () => {
  it('reads a valid landscape from its folder or the file itself', () => {
    const dir = writeDir(JSON.stringify(sample()));
    const a = loadLandscape(dir);
    expect(a.path).toBe(join(dir, 'landscape.json'));
    expect(a.landscape.kept.length).toBe(5);
    expect(loadLandscape(join(dir, 'landscape.json')).landscape).toEqual(a.landscape);
  });

  it('says what is wrong, naming the file and field', () => {
    const cases: Array<[(l: any) => void, RegExp]> = [
      [(l) => { l.format = 'other'; }, /"format" is "other", expected "polysift-landscape"/],
      [(l) => { l.formatVersion = 2; }, /reads version 1 only/],
      [(l) => { l.parameters.k = 0; }, /"parameters.k" must be a positive integer/],
      [(l) => { l.structures[1].index = 7; }, /"structures\[1\]".index is 7, expected 1/],
      [(l) => { l.kept.push(99); }, /"kept\[5\]" must be a structure index below 5/],
      [(l) => { l.invariants.k = 5; }, /"invariants.k" is 5 but parameters.k is 6/],
      [(l) => { l.invariants.kept[0].pddRows.pop(); }, /"invariants.kept\[0\]".pddRows must hold/],
      [(l) => { l.invariants.kept[2].pddWeights[0] += 0.1; }, /pddWeights add up to/],
      [(l) => { l.invariants.kept.pop(); }, /has no entry for kept structure/],
      [(l) => { l.invariants.kept[1].amd = [1, 2]; }, /amd must hold k = 6 numbers/],
    ];
    for (const [spoil, message] of cases) {
      const l = sample();
      spoil(l);
      const dir = writeDir(JSON.stringify(l));
      expect(() => loadLandscape(dir)).toThrow(message);
      expect(() => loadLandscape(dir)).toThrow(join(dir, 'landscape.json'));
    }
  });

  it('reports a missing folder, a folder without landscape.json and truncated JSON', () => {
    expect(() => loadLandscape('/nonexistent/run')).toThrow(/\/nonexistent\/run: no such folder or file/);
    const empty = mkdtempSync(join(tmpdir(), 'polysift-load-'));
    mkdirSync(join(empty, 'x'));
    expect(() => loadLandscape(empty)).toThrow(/no landscape.json in this folder/);
    const dir = writeDir(JSON.stringify(sample()).slice(0, 200));
    expect(() => loadLandscape(dir)).toThrow(/not valid JSON .* truncated/);
  });

  it('ranks kept structures by energy, 1 = lowest', () => {
    const l = sample();
    const ranks = energyRanks(l);
    const sorted = l.kept.slice().sort((x, y) => (l.structures[x].energy as number) - (l.structures[y].energy as number));
    sorted.forEach((i, r) => expect(ranks.get(i)).toBe(r + 1));
  });
});
