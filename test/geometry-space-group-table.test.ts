// The space-group table (src/geometry/space-group-table.ts) against two reference libraries, live:
// gemmi's copy of the Hall-symbol table of International Tables Vol. B (number, Hall symbol, H-M symbol,
// setting code, operations) and spglib's (full H-M symbols, its own spelling of some Hall symbols).
import { describe, expect, it } from 'vitest';
import type { SymOp } from '../src/types.js';
import { canonicalOp } from '../src/geometry/symmetry.js';
import {
  defaultSetting, groupSymbol, OTHER_SETTINGS, settingByHall, settingByOperations, settingLabel, settingOperations,
  settingsOfGroup, SPACE_GROUP_SETTINGS,
} from '../src/geometry/space-group-table.js';
import { GEMMI_OPS_TO_LIST, gemmiJson, type GemmiOp } from './geometry-gemmi.js';

interface GemmiRow {
  number: number;
  hall: string;
  hm: string;
  ext: string;
  qualifier: string;
  xhm: string;
  short: string;
  reference: boolean;
  ops: GemmiOp[];
}

// Reference: gemmi.spacegroup_table() (Debian's python3-gemmi), every entry with its operations.
const gemmiRows = gemmiJson<GemmiRow[]>(
  `out = []\nfor s in gemmi.spacegroup_table():\n    g = s.operations()\n    out.append({"number": s.number, "hall": s.hall, "hm": s.hm, "ext": s.ext.replace("\\x00", ""), "qualifier": s.qualifier, "xhm": s.xhm(), "short": s.short_name(), "reference": s.is_reference_setting(), "ops": ${GEMMI_OPS_TO_LIST}})\nprint(json.dumps(out))`,
);
// Reference: spglib.get_spacegroup_type(hall_number) for hall numbers 1..530 (Debian's python3-spglib).
const spglibRows = gemmiJson<{ hall: string; full: string; number: number }[]>(
  `import spglib\nout = []\nfor h in range(1, 531):\n    t = spglib.get_spacegroup_type(h)\n    out.append({"hall": t["hall_symbol"], "full": t["international_full"], "number": t["number"]})\nprint(json.dumps(out))`,
);

function ourKeys(ops: SymOp[]): string[] {
  return ops
    .map((o) => {
      const c = canonicalOp(o);
      return `${c.rot.join(',')}|${c.trans.map((v) => Math.round(v * 24) % 24).join(',')}`;
    })
    .sort();
}
function gemmiKeys(ops: GemmiOp[]): string[] {
  return ops.map((o) => `${o.rot.flat().map((v) => v / 24).join(',')}|${o.tran.join(',')}`).sort();
}
const spaced = (s: string): string => s.trim().replace(/\s+/g, ' ');

describe('the table of 530 settings', () => {
  it('has the 530 settings of International Tables in gemmi\'s order, every group number 1..230 in turn', () => {
    expect(SPACE_GROUP_SETTINGS.length).toBe(530);
    const standard = gemmiRows.slice(0, 530);
    expect(SPACE_GROUP_SETTINGS.map((s) => [s.number, spaced(s.hall), s.hm])).toEqual(
      standard.map((g) => [g.number, spaced(g.hall), g.hm]),
    );
    const numbers = [...new Set(SPACE_GROUP_SETTINGS.map((s) => s.number))];
    expect(numbers).toEqual(Array.from({ length: 230 }, (_, i) => i + 1));
  });

  it('carries gemmi\'s origin choice, axes and axis/cell-choice code in each setting code', () => {
    const ours = SPACE_GROUP_SETTINGS.map((s) => s.ext);
    const theirs = gemmiRows.slice(0, 530).map((g) => {
      const origin = g.ext === '1' || g.ext === '2' ? g.ext : '';
      const axes = g.ext === 'H' || g.ext === 'R' ? g.ext : '';
      return origin + g.qualifier + axes;
    });
    expect(ours).toEqual(theirs);
    // The label written in _space_group_name_H-M_alt is gemmi's extended symbol.
    expect(SPACE_GROUP_SETTINGS.map(settingLabel)).toEqual(gemmiRows.slice(0, 530).map((g) => g.xhm));
  });

  it('builds, with our Hall parser, exactly gemmi\'s operations for every one of the 530 settings and the others', () => {
    const mismatches: string[] = [];
    const all = [...SPACE_GROUP_SETTINGS, ...OTHER_SETTINGS];
    expect(all.length).toBe(gemmiRows.length);
    all.forEach((s, i) => {
      if (ourKeys(settingOperations(s)).join(' ') !== gemmiKeys(gemmiRows[i]!.ops).join(' ')) mismatches.push(`${s.number} ${s.hall}`);
    });
    expect(mismatches).toEqual([]);
  });

  it('gives spglib\'s full Hermann–Mauguin symbol of every setting', () => {
    expect(SPACE_GROUP_SETTINGS.map((s) => s.full)).toEqual(spglibRows.map((r) => r.full.replace(/_/g, '')));
    expect(SPACE_GROUP_SETTINGS.map((s) => s.number)).toEqual(spglibRows.map((r) => r.number));
  });

  it('finds each setting from its Hall symbol in gemmi\'s and in spglib\'s spelling, with any spacing or case', () => {
    const wrong: string[] = [];
    SPACE_GROUP_SETTINGS.forEach((s, i) => {
      // Group 68 lists one Hall symbol under two names; the first name is the one found.
      const expected = settingByOperations(settingOperations(s));
      for (const h of [gemmiRows[i]!.hall, spglibRows[i]!.hall, `  ${gemmiRows[i]!.hall.toLowerCase().replace(/ /g, '   ')} `]) {
        if (settingByHall(h) !== expected) wrong.push(`${h} -> ${settingByHall(h)?.hall ?? 'null'}`);
      }
    });
    expect(wrong).toEqual([]);
    expect(settingByHall('-P 2ybc')?.hm).toBe('P 1 21/c 1');
    // An equivalent Hall symbol not in the table: the origin written as an explicit shift of nothing.
    expect(settingByHall('-P 2ybc (0 0 0)')?.hm).toBe('P 1 21/c 1');
    expect(settingByHall('P 2yb (0 0 1)')).toBeNull(); // P21 with its origin moved: no table setting
    expect(settingByHall('Q 1')).toBeNull();
  });

  it('tells the 527 distinct operation sets apart (group 68 names three of them twice, as the Tables do)', () => {
    const sameOps = SPACE_GROUP_SETTINGS.filter((s) => settingByOperations(settingOperations(s)) !== s);
    expect(sameOps.map((s) => `${s.number} ${s.hm}:${s.ext}`)).toEqual(['68 C c c b:1ba-c', '68 A c a a:1-cba', '68 B b a b:1a-cb']);
  });
});

describe('default settings and the symbols polysift prints', () => {
  it('takes as default the reference setting gemmi marks for each of the 230 numbers', () => {
    for (let n = 1; n <= 230; n++) {
      const refs = gemmiRows.slice(0, 530).filter((g) => g.number === n && g.reference);
      expect(refs.length, `group ${n}`).toBe(1);
      expect(spaced(defaultSetting(n).hall), `group ${n}`).toBe(spaced(refs[0]!.hall));
    }
    expect(() => defaultSetting(0)).toThrow(/1\.\.230/);
    expect(() => defaultSetting(231)).toThrow(/1\.\.230/);
    expect(() => defaultSetting(14.5)).toThrow(/1\.\.230/);
  });

  it('prints one short symbol per group, gemmi\'s short name of the default setting (R for rhombohedral groups, not H)', () => {
    expect([groupSymbol(14), groupSymbol(2), groupSymbol(19), groupSymbol(62), groupSymbol(225), groupSymbol(167), groupSymbol(227)]).toEqual(
      ['P21/c', 'P-1', 'P212121', 'Pnma', 'Fm-3m', 'R-3c', 'Fd-3m'],
    );
    for (let n = 1; n <= 230; n++) {
      const ref = gemmiRows.find((g) => g.number === n && g.reference)!;
      expect(groupSymbol(n), `group ${n}`).toBe(ref.short.replace(/^H/, 'R'));
    }
  });

  it('lists every setting of a group in table order', () => {
    expect(settingsOfGroup(14).map((s) => s.ext)).toEqual(['b1', 'b2', 'b3', 'c1', 'c2', 'c3', 'a1', 'a2', 'a3']);
    expect(settingsOfGroup(167).map(settingLabel)).toEqual(['R -3 c:H', 'R -3 c:R']);
    expect(settingsOfGroup(227).map(settingLabel)).toEqual(['F d -3 m:1', 'F d -3 m:2']);
  });
});
