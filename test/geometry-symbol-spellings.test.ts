// The spellings of each space group that the report's filter accepts (src/geometry/symbol-spellings.ts), checked
// against gemmi's symbol lookup (gemmi.find_spacegroup_by_name, Debian's python3-gemmi, live): every spelling
// gemmi can read names the same group, and no spelling names two groups.
import { describe, expect, it } from 'vitest';
import { symbolSpellings } from '../src/geometry/symbol-spellings.js';
import { gemmiJson } from './geometry-gemmi.js';

const all = Array.from({ length: 230 }, (_, i) => ({ number: i + 1, spellings: symbolSpellings(i + 1) }));

describe('space-group spellings', () => {
  it('include the spellings found in files and papers for the common organic groups', () => {
    const has = (n: number, ...s: string[]) => expect(symbolSpellings(n)).toEqual(expect.arrayContaining(s));
    has(14, '14', 'p21/c', 'p 21/c', 'p 1 21/c 1', 'p2_1/c', 'p121/c1', 'p21/n', 'p 1 21/n 1', 'p21/a');
    has(2, 'p-1', 'p -1');
    has(19, 'p212121', 'p 21 21 21', 'p2_12_12_1');
    has(15, 'c2/c', 'c 1 2/c 1', 'c 2/c', 'i2/a');
    has(61, 'pbca', 'p b c a', 'p 21/b 21/c 21/a');
    has(33, 'pna21', 'p n a 21', 'pna2_1');
    // The newer e-glide names International Tables use since 2002 (common practice).
    has(64, 'cmca', 'cmce');
  });
  it('never name two groups', () => {
    const owner = new Map<string, number>();
    for (const g of all) for (const s of g.spellings) {
      expect(owner.get(s) ?? g.number, `${s}`).toBe(g.number);
      owner.set(s, g.number);
    }
  });
  it('name the same group as gemmi wherever gemmi reads them', () => {
    const names = all.flatMap((g) => g.spellings.filter((s) => !/^\d+$/.test(s)).map((s) => [g.number, s] as const));
    const theirs = gemmiJson<Array<number | null>>(
      `names = ${JSON.stringify(names.map((n) => n[1]))}\nout = []\nfor n in names:\n    g = gemmi.find_spacegroup_by_name(n)\n    out.append(None if g is None else g.number)\nprint(json.dumps(out))`,
    );
    const wrong = names.flatMap((n, i) => (theirs[i] !== null && theirs[i] !== n[0] ? [`${n[1]} (${n[0]}, gemmi ${theirs[i]})`] : []));
    expect(wrong).toEqual([]);
    // gemmi reads most of them (it does not read underscores or every compact form).
    const read = theirs.filter((t) => t !== null).length;
    expect(read / names.length).toBeGreaterThan(0.5);
  });
});
