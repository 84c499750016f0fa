// Space-group symbols as files write them -> settings of the table (src/geometry/space-group-symbol.ts).
// References, live: gemmi's table and symbol lookup (Debian's python3-gemmi) and spglib's full symbols
// (python3-spglib); International Tables conventions named beside each case.
import { describe, expect, it } from 'vitest';
import type { CellParams, SymOp } from '../src/types.js';
import { canonicalOp } from '../src/geometry/symmetry.js';
import {
  defaultSetting, OTHER_SETTINGS, settingLabel, settingOperations, SPACE_GROUP_SETTINGS, type SpaceGroupSetting,
} from '../src/geometry/space-group-table.js';
import { settingFromNumber, settingFromSymbol } from '../src/geometry/space-group-symbol.js';
import { readCifText } from '../src/io/read.js';
import { GEMMI_OPS_TO_LIST, gemmiJson, type GemmiOp } from './geometry-gemmi.js';

interface GemmiRow {
  number: number;
  hm: string;
  xhm: string;
  short: string;
  ops: GemmiOp[];
}
// Reference: every entry of gemmi.spacegroup_table() with its H-M spellings and operations.
const gemmiRows = gemmiJson<GemmiRow[]>(
  `out = []\nfor s in gemmi.spacegroup_table():\n    g = s.operations()\n    out.append({"number": s.number, "hm": s.hm, "xhm": s.xhm(), "short": s.short_name(), "ops": ${GEMMI_OPS_TO_LIST}})\nprint(json.dumps(out))`,
);
// Reference: spglib's full H-M symbol of each of the 530 settings, as spglib writes it ('P 2_1/b 2_1/c 2_1/a').
const spglibFull = gemmiJson<string[]>(
  `import spglib\nprint(json.dumps([spglib.get_spacegroup_type(h)["international_full"] for h in range(1, 531)]))`,
);

function ourKeys(ops: SymOp[]): string {
  return ops
    .map((o) => {
      const c = canonicalOp(o);
      return `${c.rot.join(',')}|${c.trans.map((v) => Math.round(v * 24) % 24).join(',')}`;
    })
    .sort()
    .join(' ');
}
function gemmiKeys(ops: GemmiOp[]): string {
  return ops.map((o) => `${o.rot.flat().map((v) => v / 24).join(',')}|${o.tran.join(',')}`).sort().join(' ');
}
const opsOf = (s: SpaceGroupSetting): string => ourKeys(settingOperations(s));

/** A cell with the shape a setting needs (monoclinic: oblique angle on the unique axis; rhombohedral axes). */
function cellFor(s: SpaceGroupSetting): CellParams {
  const n = s.number;
  if (n <= 2) return { a: 5.1, b: 6.2, c: 7.3, alpha: 81, beta: 97, gamma: 103 };
  if (n <= 15) {
    const axis = /^-?([abc])/.exec(s.ext)?.[1] ?? 'b';
    return { a: 5.1, b: 6.2, c: 7.3, alpha: axis === 'a' ? 101 : 90, beta: axis === 'b' ? 101 : 90, gamma: axis === 'c' ? 101 : 90 };
  }
  if (n <= 74) return { a: 5.1, b: 6.2, c: 7.3, alpha: 90, beta: 90, gamma: 90 };
  if (n <= 142) return { a: 5.1, b: 5.1, c: 7.3, alpha: 90, beta: 90, gamma: 90 };
  if (n <= 194) return s.ext.endsWith('R') ? { a: 6, b: 6, c: 6, alpha: 50, beta: 50, gamma: 50 } : { a: 5.1, b: 5.1, c: 7.3, alpha: 90, beta: 90, gamma: 120 };
  return { a: 5.1, b: 5.1, c: 5.1, alpha: 90, beta: 90, gamma: 90 };
}

describe('every H-M spelling in gemmi\'s table (live)', () => {
  it('resolves each extended symbol with its suffix (P 1 21/c 1, P n n n:1, R -3 c:R) to exactly that setting', () => {
    const wrong: string[] = [];
    for (const g of gemmiRows) {
      const r = settingFromSymbol(g.xhm);
      if (r === null || opsOf(r.setting) !== gemmiKeys(g.ops)) wrong.push(`${g.xhm} -> ${r === null ? 'null' : settingLabel(r.setting)}`);
    }
    expect(wrong).toEqual([]);
  });

  it('resolves each bare symbol and each of gemmi\'s short names to a choice that includes that setting', () => {
    const wrong: string[] = [];
    for (const g of gemmiRows) {
      for (const spelling of [g.hm, g.short]) {
        const r = settingFromSymbol(spelling);
        if (r === null || !r.allowed.some((s) => opsOf(s) === gemmiKeys(g.ops))) wrong.push(`${spelling} (${g.xhm})`);
      }
    }
    expect(wrong).toEqual([]);
  });

  it('takes, for a bare symbol that two origins or two axes share, the International Tables default and says so', () => {
    // The ambiguous ones: origin choice 1 or 2, hexagonal or rhombohedral axes (gemmi writes them with a suffix).
    const ambiguous = SPACE_GROUP_SETTINGS.filter((s) => /^[12]|[HR]$/.test(s.ext));
    expect(ambiguous.length).toBe(gemmiRows.slice(0, 530).filter((g) => g.xhm.includes(':')).length);
    for (const s of ambiguous) {
      const r = settingFromSymbol(s.hm)!;
      expect(r.allowed.length, s.hm).toBe(2);
      expect(r.undecided, s.hm).toMatch(/does not say which of 2 settings is meant/);
      expect(r.setting.ext, s.hm).toBe(s.ext.replace(/^1/, '2').replace(/R$/, 'H'));
      if (s.ext.replace(/^[12]/, '') === '' || /[HR]$/.test(s.ext)) expect(r.setting, s.hm).toBe(defaultSetting(s.number));
    }
  });

  it('reads spglib\'s full symbols (underscored screws) as the same setting, up to the same ambiguity', () => {
    const wrong: string[] = [];
    SPACE_GROUP_SETTINGS.forEach((s, i) => {
      const r = settingFromSymbol(spglibFull[i]!);
      if (r === null || !r.allowed.some((a) => opsOf(a) === opsOf(s))) wrong.push(`${spglibFull[i]} (${settingLabel(s)})`);
    });
    expect(wrong).toEqual([]);
    expect(settingFromSymbol('P 2_1/n 2_1/m 2_1/a')!.setting.hm).toBe('P n m a');
    expect(settingFromSymbol('F 4/m -3 2/m')!.setting.hm).toBe('F m -3 m');
    expect(settingFromSymbol('P 6_3/m 2/m 2/c')!.setting.hm).toBe('P 63/m m c');
  });

  it('agrees with gemmi\'s own lookup on the e-glide names of International Tables 2002 (Cmce, Aem2, ...)', () => {
    const names = ['C m c e', 'C c m e', 'A e m a', 'A e a m', 'B b e m', 'B m e b', 'A e m 2', 'B m e 2', 'B 2 e m', 'C 2 m e', 'C m 2 e', 'A e 2 m',
      'A e a 2', 'B b e 2', 'B 2 e b', 'C 2 c e', 'C c 2 e', 'A e 2 a', 'C m m e', 'A e m m', 'B m e m', 'C c c e:1', 'C c c e:2', 'A e a a:1', 'B b e b:2', 'Cmce'];
    const ref = gemmiJson<Record<string, GemmiOp[]>>(
      `out = {}\nfor n in ${JSON.stringify(names)}:\n    g = gemmi.find_spacegroup_by_name(n).operations()\n    out[n] = ${GEMMI_OPS_TO_LIST}\nprint(json.dumps(out))`,
    );
    for (const n of names) {
      const r = settingFromSymbol(n);
      expect(r, n).not.toBeNull();
      // gemmi takes the first setting where the e-name covers two; ours must allow it.
      expect(r!.allowed.map(opsOf), n).toContain(gemmiKeys(ref[n]!));
    }
  });
});

describe('spellings files use', () => {
  it('reads every one of the 530 settings through case, spacing, screw and quoting variants', () => {
    const wrong: string[] = [];
    for (const s of SPACE_GROUP_SETTINGS) {
      const label = settingLabel(s);
      const [sym, code] = label.split(':') as [string, string | undefined];
      const suffix = code === undefined ? '' : `:${code}`;
      const variants = [
        label.toUpperCase().replace(/:([HR12])$/, ':$1'),
        label.toLowerCase(),
        `${sym.replace(/ /g, '')}${suffix}`,
        `${sym.replace(/(\d)(\d)/g, '$1_$2')}${suffix}`,
        `${sym.replace(/(\d)(\d)/g, '$1($2)')}${suffix}`,
        `'${sym} ${suffix}'`,
        `${sym}${code === '1' ? ' S' : code === '2' ? ' Z' : code === 'H' ? ' H' : code === 'R' ? ' R' : ''}`,
        `${sym} ${code === '1' ? '{origin choice 1}' : code === '2' ? '(origin choice 2)' : code === 'H' ? '{hexagonal axes}' : code === 'R' ? '{rhombohedral axes}' : ''}`,
        `${sym.replace(/-(\d)/g, '\u2212$1')}${suffix}`,
      ];
      // Monoclinic settings other than the first cell choice are told apart by their cell (done elsewhere).
      for (const v of variants) {
        const r = settingFromSymbol(v, { cell: cellFor(s) });
        if (r === null || opsOf(r.setting) !== opsOf(s)) wrong.push(`${v} -> ${r === null ? 'null' : settingLabel(r.setting)}`);
      }
    }
    expect(wrong).toEqual([]);
  });

  it('reads the cubic symbols written before 1983 without bars as the same groups (as in real files)', () => {
    for (const s of SPACE_GROUP_SETTINGS.filter((x) => x.number >= 200 && x.hm.split(' ')[2] === '-3')) {
      const old = s.hm.replace(' -3', ' 3');
      expect(settingFromSymbol(old)!.allowed, old).toEqual(settingFromSymbol(s.hm)!.allowed);
    }
    // 'P m 3 m' is 221, never 'P -4 3 m' (215).
    expect(settingFromSymbol('P m 3 m')!.setting.number).toBe(221);
  });

  it('reads the H lattice letter of rhombohedral groups on hexagonal axes (as gemmi does)', () => {
    expect(settingLabel(settingFromSymbol('H 3')!.setting)).toBe('R 3:H');
    expect(settingLabel(settingFromSymbol('H -3 m')!.setting)).toBe('R -3 m:H');
    expect(settingFromSymbol('H 4/m')).toBeNull();
  });

  it('decides what the symbol leaves open from the cell: rhombohedral axes and the monoclinic unique axis', () => {
    const rhombohedral = { a: 6, b: 6, c: 6, alpha: 47.5, beta: 47.5, gamma: 47.5 };
    const hexagonal = { a: 5, b: 5, c: 17, alpha: 90, beta: 90, gamma: 120 };
    for (const n of [146, 148, 155, 160, 161, 166, 167]) {
      const hm = defaultSetting(n).hm;
      expect(settingFromSymbol(hm, { cell: rhombohedral })!.setting.ext, hm).toBe('R');
      expect(settingFromSymbol(hm, { cell: rhombohedral })!.undecided, hm).toBeNull();
      expect(settingFromSymbol(hm, { cell: hexagonal })!.setting.ext, hm).toBe('H');
      expect(settingFromNumber(n, { cell: rhombohedral })!.setting.ext, hm).toBe('R');
    }
    // 'B 2/b' is B 1 1 2/b (unique axis c) or B 2/b 1 1 (unique axis a): the oblique angle says which.
    expect(settingLabel(settingFromSymbol('B 2/b', { cell: { a: 5, b: 6, c: 7, alpha: 90, beta: 90, gamma: 110 } })!.setting)).toBe('B 1 1 2/b');
    expect(settingLabel(settingFromSymbol('B 2/b', { cell: { a: 5, b: 6, c: 7, alpha: 110, beta: 90, gamma: 90 } })!.setting)).toBe('B 2/b 1 1');
    // A symbol that fixes the axes keeps them, and a cell of the other shape is noted.
    const r = settingFromSymbol('R -3 c:H', { cell: rhombohedral })!;
    expect(r.setting.ext).toBe('H');
    expect(r.notes.join()).toMatch(/'R -3 c:H' is on hexagonal axes but the cell does not have that shape \(a = b, alpha = beta = 90° and gamma = 120°\)/);
  });

  it('takes setting codes, origin markers and cell-setting items as hints', () => {
    expect(settingFromSymbol('R -3', { code: 'r' })!.setting.ext).toBe('R');
    expect(settingFromSymbol('R -3', { cellSetting: 'rhombohedral' })!.setting.ext).toBe('R');
    expect(settingFromSymbol('P n n n', { code: '1' })!.setting.ext).toBe('1');
    expect(settingFromSymbol('F d -3 m S')!.setting.ext).toBe('1');
    expect(settingFromSymbol('F D -3 M Z')!.setting.ext).toBe('2');
    expect(settingFromSymbol('R-3cR')!.setting.ext).toBe('R');
    expect(settingLabel(settingFromNumber(14, { code: 'b3' })!.setting)).toBe('P 1 21/a 1');
    expect(settingLabel(settingFromNumber(17, { code: 'cab' })!.setting)).toBe('P 21 2 2');
    expect(settingLabel(settingFromNumber(50, { code: '1cab' })!.setting)).toBe('P n c b:1');
    // A hint that does not fit is reported, not obeyed.
    const r = settingFromSymbol('P 21/c', { code: 'r' })!;
    expect(r.setting.hm).toBe('P 1 21/c 1');
    expect(r.notes.join()).toMatch(/the setting code 'r' does not fit 'P 21\/c'; it was ignored/);
  });

  it('names settings outside International Tables that programs still write, and says so', () => {
    for (const s of OTHER_SETTINGS.filter((x) => !/\)/.test(x.hm))) {
      const r = settingFromSymbol(s.hm);
      expect(r?.setting, s.hm).toBe(s);
      expect(r!.notes.join(), s.hm).toMatch(/is not one of the International Tables settings/);
    }
  });

  it('refuses text that names no setting', () => {
    for (const t of ['', "''", 'P 1 1 21/c', 'P 5', 'Q 21/c', 'P 21/c:b2', 'P 21/c:9', 'hello', 'P 4/m m m:R']) {
      expect(settingFromSymbol(t), t).toBeNull();
    }
    for (const n of [0, 231, -3, 14.5, NaN]) expect(settingFromNumber(n), String(n)).toBeNull();
  });
});

describe('a space-group number alone', () => {
  it('resolves each of the 230 numbers to the default setting, with gemmi\'s operations for it (live)', () => {
    // A cell of the default setting's shape, made large, and one site far (about 1 Å) from every symmetry element,
    // so that the atom sites cannot favour another origin: the reader must take the default.
    const ref = gemmiJson<GemmiOp[][]>(
      `out = []\nfor n in range(1, 231):\n    s = next(x for x in gemmi.spacegroup_table() if x.number == n and x.is_reference_setting())\n    g = s.operations()\n    out.append(${GEMMI_OPS_TO_LIST})\nprint(json.dumps(out))`,
    );
    const blocks: string[] = [];
    for (let n = 1; n <= 230; n++) {
      const shape = cellFor(defaultSetting(n));
      const c = { ...shape, a: shape.a * 10, b: shape.b * 10, c: shape.c * 10 };
      blocks.push(
        `data_n${n}\n_cell_length_a ${c.a}\n_cell_length_b ${c.b}\n_cell_length_c ${c.c}\n_cell_angle_alpha ${c.alpha}\n_cell_angle_beta ${c.beta}\n` +
          `_cell_angle_gamma ${c.gamma}\n_space_group_IT_number ${n}\nloop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nC1 0.0197 0.0613 0.1033\n`,
      );
    }
    const results = readCifText(blocks.join(''), 'numbers.cif');
    expect(results.length).toBe(230);
    const wrong: string[] = [];
    results.forEach((r, i) => {
      const n = i + 1;
      if (r.kind !== 'record') wrong.push(`${n}: ${r.rejected.reason}`);
      else if (r.record.setting !== defaultSetting(n) || ourKeys(r.record.ops) !== gemmiKeys(ref[i]!)) wrong.push(`${n}: ${r.record.setting?.hall}`);
      else if (r.record.opsOrigin !== 'symbol') wrong.push(`${n}: ${r.record.opsOrigin}`);
      else if (defaultSetting(n).ext !== '' && !/the space-group number \d+ alone does not say which of \d settings is meant/.test(r.record.notes.join())) {
        // Several settings fit the cell (origin choices, cell choices): the default is taken with a note.
        if (/^[12]|^b1$/.test(defaultSetting(n).ext)) wrong.push(`${n}: no note`);
      }
    });
    expect(wrong).toEqual([]);
  });
});
