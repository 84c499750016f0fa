import { describe, expect, it } from 'vitest';
import type { SymOp } from '../src/types.js';
import {
  applyOp, canonicalOp, closeGroup, composeOps, formatOpXyz, invertOp, isClosedGroup, opKey, opsFromSymbol,
  parseSymopXyz,
} from '../src/geometry/symmetry.js';
import { opsFromHall } from '../src/geometry/hall.js';
import { GEMMI_OPS_TO_LIST, gemmiJson, type GemmiOp } from './geometry-gemmi.js';

/** Set of (rotation, translation mod 1) keys, in 24ths like gemmi. */
function ourKeys(ops: SymOp[]): string[] {
  return ops
    .map((o) => {
      const c = canonicalOp(o);
      const t = c.trans.map((v) => Math.round(v * 24) % 24);
      return `${c.rot.join(',')}|${t.join(',')}`;
    })
    .sort();
}
function gemmiKeys(ops: GemmiOp[]): string[] {
  return ops.map((o) => `${o.rot.flat().map((v) => v / 24).join(',')}|${o.tran.join(',')}`).sort();
}

describe('parseSymopXyz reads every CIF spelling of an operation', () => {
  // Expected matrices written out by hand from the CIF 1.1 definition of _space_group_symop_operation_xyz.
  const cases: [string, number[], number[]][] = [
    ['x,y,z', [1, 0, 0, 0, 1, 0, 0, 0, 1], [0, 0, 0]],
    ['-x+1/2, y+0.5, -z', [-1, 0, 0, 0, 1, 0, 0, 0, -1], [0.5, 0.5, 0]],
    ['1/2+x,1/2-y,z', [1, 0, 0, 0, -1, 0, 0, 0, 1], [0.5, 0.5, 0]],
    ['-x+y,+z,-y', [-1, 1, 0, 0, 0, 1, 0, -1, 0], [0, 0, 0]],
    ['x-y,x,z+1/6', [1, -1, 0, 1, 0, 0, 0, 0, 1], [0, 0, 1 / 6]],
    ['X,Y,Z', [1, 0, 0, 0, 1, 0, 0, 0, 1], [0, 0, 0]],
    [' -X , -Y , 0.25+Z ', [-1, 0, 0, 0, -1, 0, 0, 0, 1], [0, 0, 0.25]],
    ["'x, -y, z+1/2'", [1, 0, 0, 0, -1, 0, 0, 0, 1], [0, 0, 0.5]],
    ['x+1,y-1,z', [1, 0, 0, 0, 1, 0, 0, 0, 1], [1, -1, 0]],
    ['-y+3/4,x+1/4,z+3/4', [0, -1, 0, 1, 0, 0, 0, 0, 1], [0.75, 0.25, 0.75]],
  ];
  for (const [text, rot, trans] of cases) {
    it(`reads '${text}'`, () => {
      const op = parseSymopXyz(text);
      expect(op.rot).toEqual(rot);
      op.trans.forEach((v, i) => expect(v).toBeCloseTo(trans[i]!, 12));
    });
  }
  const bad = ['x,y', 'x,y,z,1', 'x,y,q', 'x,,z', '2x,y,z', 'x,y+,z', 'x y z', 'x,y,1/0', 'x,x,z', '0.5x,y,z', 'x,y,z+'];
  for (const text of bad) {
    it(`rejects '${text}' with a message naming it`, () => {
      expect(() => parseSymopXyz(text)).toThrow(/symmetry operation/);
    });
  }
});

describe('operation algebra', () => {
  it('composes, inverts and applies consistently', () => {
    const a = parseSymopXyz('-y+1/4,x-y,z+1/3');
    const b = parseSymopXyz('-x,-y+1/2,z');
    const p = [0.1, 0.27, 0.83];
    const ab = composeOps(a, b);
    const lhs = applyOp(ab, p);
    const rhs = applyOp(a, applyOp(b, p));
    lhs.forEach((v, i) => expect(v).toBeCloseTo(rhs[i]!, 12));
    const id = canonicalOp(composeOps(a, invertOp(a)));
    expect(opKey(id)).toBe(opKey(parseSymopXyz('x,y,z')));
  });
  it('wraps translations to [0,1) in the canonical form', () => {
    expect(canonicalOp(parseSymopXyz('x-1/2,y+1,z-1')).trans).toEqual([0.5, 0, 0]);
    expect(formatOpXyz(parseSymopXyz('-x+3/2,y,-z-1/4'))).toBe('-x+1/2,y,-z+3/4');
  });
  it('closes generators into a group and refuses sets that never close', () => {
    const g = closeGroup([parseSymopXyz('-x,y+1/2,-z+1/2'), parseSymopXyz('-x,-y,-z')]);
    expect(g.length).toBe(4);
    expect(isClosedGroup(g)).toBe(true);
    expect(() => closeGroup([parseSymopXyz('x+0.001,y,z')])).toThrow(/more than 192/);
  });
});

describe('opsFromSymbol (checked against gemmi, live)', () => {
  // The symbols of the first reader (common in organic crystals) and, since the full table, symbols of every
  // crystal family. Reference: gemmi.find_spacegroup_by_name(name).operations(), from Debian's python3-gemmi.
  const FIRST_SYMBOLS = ['P1', 'P-1', 'P21', 'P21/c', 'P21/n', 'P21/a', 'C2/c', 'P212121', 'Pbca', 'Pna21', 'Pca21', 'Cc', 'C2', 'Pc', 'P2/c', 'Pbcn', 'C2/m'];
  const MORE_SYMBOLS = ['Fm-3m', 'P4/mmm', 'R-3', 'P 21 21 2', 'P 63/m m c', 'I 41/a m d :2', 'R 3 c:R', 'P -4 21 c', 'I a -3 d', 'P 65 2 2'];
  const names = [...FIRST_SYMBOLS, ...MORE_SYMBOLS];
  const ref = gemmiJson<Record<string, GemmiOp[]>>(
    `names = ${JSON.stringify(names)}\nout = {}\nfor n in names:\n    g = gemmi.find_spacegroup_by_name(n).operations()\n    out[n] = ${GEMMI_OPS_TO_LIST}\nprint(json.dumps(out))`,
  );
  for (const name of names) {
    it(`builds the same operations as gemmi for ${name}`, () => {
      const ops = opsFromSymbol(name);
      expect(ops).not.toBeNull();
      expect(ourKeys(ops!)).toEqual(gemmiKeys(ref[name]!));
      expect(isClosedGroup(ops!)).toBe(true);
    });
  }
  it('accepts the common spellings and refuses text that names no setting', () => {
    const p21c = ourKeys(opsFromSymbol('P21/c')!);
    for (const s of ['P 21/c', 'P 1 21/c 1', 'P2_1/c', 'p21/c', "'P 21/c'", 'P 21/C', 'P121/c1', 'P2(1)/c', 'P 1 21/c 1 :b1']) {
      expect(ourKeys(opsFromSymbol(s)!)).toEqual(p21c);
    }
    expect(ourKeys(opsFromSymbol('P 1 21/n 1')!)).toEqual(ourKeys(opsFromSymbol('P21/n')!));
    expect(ourKeys(opsFromSymbol('P b c a')!)).toEqual(ourKeys(opsFromSymbol('Pbca')!));
    // A c glide normal to c cannot exist; a suffix that contradicts the symbol; not a symbol at all.
    for (const s of ['P 1 1 21/c', '', 'P21/c:b2', 'P 5', 'Q 21/c', 'P 21/c:7']) {
      expect(opsFromSymbol(s), s).toBeNull();
    }
  });
});

describe('Hall-symbol parser on every Hall symbol in gemmi\'s table (live)', () => {
  // Reference: gemmi.spacegroup_table() Hall symbols and gemmi.symops_from_hall, python3-gemmi.
  const table = gemmiJson<{ hall: string; ops: GemmiOp[] }[]>(
    `out = []\nextra = ['P 2yb (0 0 1)', 'P 2yb (x,y,z+1/4)', '-P 2ybc (1 2 3)', 'P 31 2 (0 0 4)', 'P 2yb (z,x,y)', 'F 4d 2 3 -1d']\nfor h in [s.hall for s in gemmi.spacegroup_table()] + extra:\n    g = gemmi.symops_from_hall(h)\n    out.append({"hall": h, "ops": ${GEMMI_OPS_TO_LIST}})\nprint(json.dumps(out))`,
  );
  it('refuses malformed Hall symbols with a message naming them', () => {
    for (const bad of ['Q 1', 'P 5', 'P 2q', 'P 2 (1 2)', '-P', 'P 2 2 2 2 2', 'P 2 (0 0 1', 'P 2*', 'S 1']) {
      expect(() => opsFromHall(bad), bad).toThrow(/Hall symbol/);
    }
  });
  it('reads at least the 530 settings of International Tables', () => {
    expect(table.length).toBeGreaterThanOrEqual(530);
  });
  it('gives gemmi\'s operations for every one of them', () => {
    const mismatches: string[] = [];
    for (const { hall, ops } of table) {
      let ours: string[];
      try {
        ours = ourKeys(opsFromHall(hall));
      } catch (e) {
        mismatches.push(`${hall}: ${(e as Error).message}`);
        continue;
      }
      if (ours.join(' ') !== gemmiKeys(ops).join(' ')) mismatches.push(hall);
    }
    expect(mismatches).toEqual([]);
  });
});
