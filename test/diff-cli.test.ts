// `polysift diff` through the real command line: files written, the summary printed, and one clear line with a
// non-zero exit when the runs cannot be compared (project rule: bad input gets a clear message, never a crash).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { landscapeOf, pairedRuns } from './diff-fixtures.js';

const cli = join(process.cwd(), 'src', 'cli.ts');
const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const polysift = (args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8' });

const root = mkdtempSync(join(tmpdir(), 'polysift-diff-cli-'));
function run(name: string, l: unknown): string {
  const d = join(root, name);
  mkdirSync(d, { recursive: true });
  writeFileSync(join(d, 'landscape.json'), JSON.stringify(l));
  return d;
}
const { A, B } = pairedRuns(12, 10, 6, 2, 3, 0.004, 0.2);
const a = run('a', landscapeOf(A, 10));
const b = run('b', landscapeOf(B, 10));

describe('polysift diff (command line)', () => {
  it('writes its files and prints the counts as JSON', () => {
    const out = join(root, 'out');
    const r = polysift(['diff', a, b, '--out', out, '--json', '--threads', '1']);
    expect(r.stderr).toBe(`comparing 8 kept structures of ${join(a, 'landscape.json')} with 9 of ${join(b, 'landscape.json')}\n`);
    expect(r.status).toBe(0);
    const summary = JSON.parse(r.stdout);
    expect([summary.both, summary.onlyA, summary.onlyB]).toEqual([6, 2, 3]);
    for (const f of ['diff.json', 'diff-structures.csv', 'diff-pairs.csv', 'report.html']) expect(existsSync(join(out, f))).toBe(true);
  });

  it('refuses runs with different PDD depth in one line naming both runs, and a folder that is not a sift output', () => {
    const { B: B8 } = pairedRuns(12, 8, 6, 2, 3, 0.004, 0.2);
    const b8 = run('b8', landscapeOf(B8, 8));
    const r = polysift(['diff', a, b8, '--out', join(root, 'o2'), '--quiet']);
    expect(r.status).toBe(1);
    expect(r.stderr).toBe(
      `polysift: the runs were sifted with different invariant settings (PDD depth k = 10 in ${join(a, 'landscape.json')} but k = 8 in ${join(b8, 'landscape.json')}), ` +
        'so their EMDs are not comparable; sift both with the same -k and --hydrogens\n',
    );
    expect(existsSync(join(root, 'o2'))).toBe(false);
    const empty = join(root, 'empty');
    mkdirSync(empty);
    const r2 = polysift(['diff', a, empty, '--out', join(root, 'o3'), '--quiet']);
    expect(r2.status).toBe(1);
    expect(r2.stderr).toBe(`polysift: ${empty}: no landscape.json in this folder; is it the --out folder of a sift run?\n`);
  });
});
