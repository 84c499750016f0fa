// Crystal records from CIF blocks: cell, operations in every CIF spelling (CIF core dictionary, IUCr:
// `_space_group_symop_operation_xyz`, `_symmetry_equiv_pos_as_xyz`, looped with ids or single), sites,
// energy item, and every kind of bad input named in issue 2 item 8. Expected operation matrices follow the
// dictionary's definition of the `x,y,z` form (x' = R x + t); expected volumes follow the triclinic volume
// formula (International Tables for Crystallography Vol. B; common practice).
import { describe, expect, it } from 'vitest';
import { readCifText } from '../src/io/read.js';
import { cellVolumeA3 } from '../src/io/crystal-record.js';
import type { BlockResult, CrystalRecord, RejectedBlock } from '../src/types.js';

const CELL = `_cell_length_a 10.0(2)
_cell_length_b 12.0
_cell_length_c 8.0
_cell_angle_alpha 90
_cell_angle_beta 100.0(1)
_cell_angle_gamma 90
`;
const SITES = `loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
C1 C 0.1 0.2 0.3
O1 O 0.4(1) 0.5 0.6
`;

function record(results: BlockResult[], i = 0): CrystalRecord {
  const r = results[i]!;
  if (r.kind !== 'record') throw new Error(`block ${i} rejected: ${r.rejected.reason}`);
  return r.record;
}

function rejected(results: BlockResult[], i = 0): RejectedBlock {
  const r = results[i]!;
  if (r.kind !== 'rejected') throw new Error(`block ${i} was read, expected a rejection`);
  return r.rejected;
}

const P21C_OPS = [
  { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] },
  { rot: [-1, 0, 0, 0, 1, 0, 0, 0, -1], trans: [0, 0.5, 0.5] },
  { rot: [-1, 0, 0, 0, -1, 0, 0, 0, -1], trans: [0, 0, 0] },
  { rot: [1, 0, 0, 0, -1, 0, 0, 0, 1], trans: [0, 0.5, 0.5] },
];

describe('a well-formed block', () => {
  const text = `data_form1\n${CELL}_symmetry_space_group_name_H-M 'P 21/c'\nloop_\n_symmetry_equiv_pos_id\n_symmetry_equiv_pos_as_xyz\n1 x,y,z\n2 -x,1/2+y,1/2-z\n3 -x,-y,-z\n4 x,1/2-y,1/2+z\n${SITES}`;
  const rec = record(readCifText(text, 'runs/a.cif'));

  it('has id, source, line and the text exactly as read', () => {
    expect(rec.id).toBe('form1');
    expect(rec.source).toBe('runs/a.cif#form1');
    expect(rec.line).toBe(1);
    expect(rec.text).toBe(text);
  });

  it('reads the cell with su dropped', () => {
    expect(rec.cell).toEqual({ a: 10, b: 12, c: 8, alpha: 90, beta: 100, gamma: 90 });
  });

  it('reads the listed operations (old spelling, looped with ids)', () => {
    expect(rec.opsOrigin).toBe('listed');
    expect(rec.ops).toEqual(P21C_OPS);
    expect(rec.spaceGroup).toBe('P 21/c');
  });

  it('reads sites with element, coordinates and default occupancy', () => {
    expect(rec.sites).toEqual([
      { label: 'C1', element: 'C', frac: [0.1, 0.2, 0.3], occupancy: 1, disorderGroup: null, disorderAssembly: null },
      { label: 'O1', element: 'O', frac: [0.4, 0.5, 0.6], occupancy: 1, disorderGroup: null, disorderAssembly: null },
    ]);
  });
});

describe('symmetry operations in every spelling', () => {
  const spellings: Array<[string, string]> = [
    ['new name, looped with ids', `loop_\n_space_group_symop_id\n_space_group_symop_operation_xyz\n1 'x, y, z'\n2 '-x, y+1/2, -z+1/2'\n3 '-x, -y, -z'\n4 'x, -y+1/2, z+1/2'\n`],
    ['new name, loop without ids, quoted', `loop_\n_space_group_symop_operation_xyz\n'x,y,z'\n'-x,y+0.5,-z+0.5'\n'-x,-y,-z'\n'x,-y+.5,z+.5'\n`],
    ['old name, several operations on one line', `loop_\n_symmetry_equiv_pos_as_xyz\nx,y,z -x,1/2+y,1/2-z\n-x,-y,-z x,1/2-y,1/2+z\n`],
    ['old name, unquoted with spaces (joined)', `loop_\n_symmetry_equiv_pos_as_xyz\nx, y, z\n-x, 1/2+y, 1/2-z\n-x, -y, -z\nx, 1/2-y, 1/2+z\n`],
    ['mixed case and +z forms', `loop_\n_SYMMETRY_EQUIV_POS_AS_XYZ\n+X,+Y,+Z\n-X,Y+1/2,-Z+1/2\n-X,-Y,-Z\nX,-Y+1/2,Z+1/2\n`],
  ];
  for (const [what, ops] of spellings) {
    it(`reads ${what}`, () => {
      const rec = record(readCifText(`data_s\n${CELL}${ops}${SITES}`, 's.cif'));
      expect(rec.opsOrigin).toBe('listed');
      expect(rec.ops).toEqual(P21C_OPS);
    });
  }

  it('reads a single non-looped operation', () => {
    const rec = record(readCifText(`data_s\n${CELL}_space_group_symop_operation_xyz 'x,y,z'\n${SITES}`, 's.cif'));
    expect(rec.ops).toEqual([P21C_OPS[0]]);
  });

  it('lets listed operations win over the symbol and says when they are another setting', () => {
    // P 21/n operations listed under the symbol P 21/c: a setting trap from real files.
    const rec = record(
      readCifText(
        `data_s\n${CELL}_space_group_name_H-M_alt 'P 21/c'\nloop_\n_space_group_symop_operation_xyz\nx,y,z\n-x+1/2,y+1/2,-z+1/2\n-x,-y,-z\nx+1/2,-y+1/2,z+1/2\n${SITES}`,
        's.cif',
      ),
    );
    expect(rec.opsOrigin).toBe('listed');
    expect(rec.ops[1]).toEqual({ rot: [-1, 0, 0, 0, 1, 0, 0, 0, -1], trans: [0.5, 0.5, 0.5] });
    // The note names the symbol's setting and the setting the listed operations really are (both from the table).
    expect(rec.notes.join('\n')).toMatch(
      /the 4 listed operations are not the setting of the declared H-M symbol 'P 21\/c' \(group 14, 'P 1 21\/c 1', Hall '-P 2ybc', 4 operations\); they are group 14, 'P 1 21\/n 1', Hall '-P 2yn'; the listed operations are used/,
    );
  });

  it('adds no setting note when the listed operations are the symbol default', () => {
    const rec = record(readCifText(`data_s\n${CELL}_symmetry_space_group_name_H-M 'P 21/c'\n${spellings[1]![1]}${SITES}`, 's.cif'));
    expect(rec.notes.filter((n) => /setting/.test(n))).toEqual([]);
  });

  it('builds operations from the symbol when none are listed and names the table entry', () => {
    const rec = record(readCifText(`data_s\n${CELL}_space_group_name_H-M_alt 'P 1 21/c 1'\n${SITES}`, 's.cif'));
    expect(rec.opsOrigin).toBe('symbol');
    expect(rec.ops.length).toBe(4);
    expect(rec.setting?.hall).toBe('-P 2ybc');
    expect(rec.notes.join()).toMatch(/the 4 operations were built from the H-M symbol 'P 1 21\/c 1' \(group 14, 'P 1 21\/c 1', Hall '-P 2ybc'\)/);
  });

  it('builds operations from a Hall symbol, which wins over the H-M symbol when both are given', () => {
    // R -3 c (hexagonal axes): the Hall symbol '-R 3 2"c' gives the 36 operations of International Tables Vol. A
    // space group 167 (hexagonal setting: 12 point operations x 3 centrings).
    const rec = record(readCifText(`data_s\n${CELL}_symmetry_space_group_name_H-M 'R -3 c'\n_symmetry_space_group_name_Hall '-R 3 2"c'\n${SITES}`, 's.cif'));
    expect(rec.opsOrigin).toBe('symbol');
    expect(rec.ops.length).toBe(36);
    expect(rec.spaceGroup).toBe('R -3 c');
    expect(rec.notes.join()).toMatch(/built from the Hall symbol '-R 3 2"c' \(group 167, 'R -3 c:H'/);
    const p21c = record(readCifText(`data_s\n${CELL}_space_group_name_Hall '-P 2ybc'\n${SITES}`, 's.cif'));
    const key = (o: { rot: number[]; trans: number[] }): string => `${o.rot.join(',')}|${o.trans.map((t) => ((t % 1) + 1) % 1).join(',')}`;
    expect(new Set(p21c.ops.map(key))).toEqual(new Set(P21C_OPS.map(key)));
    // A Hall symbol outside the table (P21 with its origin moved by c/12) is still expanded.
    const shifted = record(readCifText(`data_s\n${CELL}_space_group_name_Hall 'P 2yb (0 0 1)'\n${SITES}`, 's.cif'));
    expect(shifted.ops.length).toBe(2);
    expect(shifted.setting).toBeUndefined();
    expect(shifted.notes.join()).toMatch(/setting outside the International Tables list/);
    // Hall and H-M naming different settings: the Hall symbol is used and the disagreement noted.
    const both = record(readCifText(`data_s\n${CELL}_space_group_name_H-M_alt 'P 21/c'\n_space_group_name_Hall '-P 2yn'\n${SITES}`, 's.cif'));
    expect(both.setting?.hm).toBe('P 1 21/n 1');
    expect(both.notes.join()).toMatch(/the Hall symbol '-P 2yn' and the H-M symbol 'P 21\/c' name different settings .*the Hall symbol is used/);
  });

  it('builds a rhombohedral group from its symbol alone: hexagonal axes by default, rhombohedral when the cell says so', () => {
    const rec = record(readCifText(`data_s\n${CELL}_symmetry_space_group_name_H-M 'R -3 c'\n${SITES}`, 's.cif'));
    expect(rec.ops.length).toBe(36);
    expect(rec.setting?.hm).toBe('R -3 c');
    expect(rec.setting?.ext).toBe('H');
    expect(rec.notes.join()).toMatch(/does not say which of 2 settings is meant and neither the cell nor the atom sites decide: took 'R -3 c:H'/);
    const rhombCell = CELL.replace('10.0(2)', '6.0').replace('12.0', '6.0').replace('8.0', '6.0').replace('alpha 90', 'alpha 47.5')
      .replace('100.0(1)', '47.5').replace('gamma 90', 'gamma 47.5');
    const rh = record(readCifText(`data_s\n${rhombCell}_symmetry_space_group_name_H-M 'R -3 c'\n${SITES}`, 's.cif'));
    expect(rh.setting?.ext).toBe('R');
    expect(rh.ops.length).toBe(12);
    expect(rh.notes.join()).not.toMatch(/does not say which/);
  });

  it('rejects a block whose only symbol names no setting, naming the symbol and the spellings read', () => {
    const r = rejected(readCifText(`data_s\n${CELL}_symmetry_space_group_name_H-M 'P 5/q'\n${SITES}`, 's.cif'));
    expect(r.reason).toMatch(/no symmetry operations are listed and the H-M symbol 'P 5\/q' names no space-group setting this reader knows/);
    expect(r.reason).toMatch(/'P 21\/c', 'P 1 21\/c 1', 'R -3 c:H'/);
  });

  it('assumes P1 with a note when there are no operations and no symbol', () => {
    const rec = record(readCifText(`data_s\n${CELL}${SITES}`, 's.cif'));
    expect(rec.opsOrigin).toBe('identity');
    expect(rec.ops).toEqual([P21C_OPS[0]]);
    expect(rec.notes.join()).toMatch(/P1 .*assumed/);
  });

  it('builds the default setting from a space-group number alone, with a note when the group has several settings', () => {
    const rec = record(readCifText(`data_s\n${CELL}_symmetry_Int_Tables_number 14\n${SITES}`, 's.cif'));
    expect(rec.opsOrigin).toBe('symbol');
    expect(rec.setting?.hall).toBe('-P 2ybc');
    expect(rec.spaceGroup).toBe('P 1 21/c 1');
    expect(rec.notes.join()).toMatch(/the space-group number 14 alone does not say which of 3 settings is meant and neither the cell nor the atom sites decide: took 'P 1 21\/c 1'/);
    expect(rec.notes.join()).toMatch(/built from the space-group number 14 \(group 14, 'P 1 21\/c 1', Hall '-P 2ybc'\)/);
    // A setting code settles it.
    const coded = record(readCifText(`data_s\n${CELL}_space_group_IT_number 14\n_space_group_IT_coordinate_system_code b2\n${SITES}`, 's.cif'));
    expect(coded.setting?.hm).toBe('P 1 21/n 1');
    expect(coded.notes.join()).not.toMatch(/does not say which/);
    const r = rejected(readCifText(`data_s\n${CELL}_symmetry_Int_Tables_number 231\n${SITES}`, 's.cif'));
    expect(r.reason).toMatch(/the space-group number '231' is not one of 1\.\.230/);
  });

  it('records the Hall symbol when no H-M symbol is given', () => {
    const rec = record(readCifText(`data_s\n${CELL}_space_group_name_Hall '-P 2ybc'\n${spellings[1]![1]}${SITES}`, 's.cif'));
    expect(rec.spaceGroup).toBe('-P 2ybc');
  });

  it('rejects an operation that does not parse, naming the line and the operation', () => {
    const r = rejected(readCifText(`data_s\n${CELL}loop_\n_symmetry_equiv_pos_as_xyz\nx,y,z\n'x,y,q'\n${SITES}`, 's.cif'));
    expect(r.reason).toMatch(/^line 11: symmetry operation 2 .*'x,y,q'/);
  });
});

describe('sites and elements', () => {
  it('reads occupancy, disorder group and assembly; . means none', () => {
    const rec = record(
      readCifText(
        `data_d\n${CELL}loop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n_atom_site_disorder_assembly\n_atom_site_disorder_group\nC1 0 0 0 0.60(2) A 1\nC1' 0 0 0.1 0.40(2) A 2\nN1 0.5 0.5 0.5 ? . .\n`,
        'd.cif',
      ),
    );
    expect(rec.sites.map((s) => [s.label, s.element, s.occupancy, s.disorderAssembly, s.disorderGroup])).toEqual([
      ['C1', 'C', 0.6, 'A', '1'],
      ["C1'", 'C', 0.4, 'A', '2'],
      ['N1', 'N', 1, null, null],
    ]);
    expect(rec.notes.join()).toMatch(/2 site\(s\) with partial occupancy/);
  });

  it('reads water labels OW1 and Wat as oxygen, not tungsten, and says so', () => {
    const rec = record(
      readCifText(`data_w\n${CELL}loop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nOW1 0 0 0\nWat2 0.5 0.5 0.5\n`, 'w.cif'),
    );
    expect(rec.sites.map((s) => s.element)).toEqual(['O', 'O']);
    expect(rec.notes.join()).toMatch(/water/);
  });

  it('settles a capitalised label like NA1 with the elements of _chemical_formula_sum', () => {
    const rec = record(
      readCifText(
        `data_n\n${CELL}_chemical_formula_sum 'Cl Na'\nloop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nNA1 0 0 0\nCL2 0.5 0.5 0.5\n`,
        'n.cif',
      ),
    );
    expect(rec.sites.map((s) => s.element)).toEqual(['Na', 'Cl']);
  });

  it("leaves hydrogen sites with '?' coordinates out with a note", () => {
    const rec = record(readCifText(`data_h\n${CELL}${SITES}H1 H ? ? ?\n`, 'h.cif'));
    expect(rec.sites.length).toBe(2);
    expect(rec.notes.join()).toMatch(/hydrogen sites with '\?' coordinates left out: H1/);
  });

  it("rejects a non-hydrogen site with '?' coordinates, naming site and line", () => {
    const r = rejected(readCifText(`data_h\n${CELL}${SITES}N5 N 0.1 ? 0.2\n`, 'h.cif'));
    expect(r.reason).toMatch(/^line 16: site N5 \(N\) has '\?' in place of its coordinates/);
  });

  it('leaves dummy sites (calc flag dum) out with a note', () => {
    const rec = record(
      readCifText(`data_q\n${CELL}loop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_calc_flag\nN1 0 0 0 d\nH1 -1 -1 -1 dum\n`, 'q.cif'),
    );
    expect(rec.sites.map((s) => s.label)).toEqual(['N1']);
    expect(rec.notes.join()).toMatch(/dummy sites .*H1/);
  });
});

describe('energy from a named data item', () => {
  const base = `data_e\n${CELL}${SITES}`;
  it('reads a numeric item, with or without the leading underscore', () => {
    expect(record(readCifText(`${base}_pred_energy -105.25(3)\n`, 'e.cif', { energyItem: '_pred_energy' })).energy).toBe(-105.25);
    expect(record(readCifText(`${base}_Pred_Energy -105.25\n`, 'e.cif', { energyItem: 'pred_energy' })).energy).toBe(-105.25);
  });
  it('gives null and a note for ?, a missing item or a non-number', () => {
    for (const [tail, pattern] of [
      ['_pred_energy ?\n', /is '\?'/],
      ['', /has no _pred_energy/],
      ['_pred_energy low\n', /'low'.*not a number/],
    ] as const) {
      const rec = record(readCifText(base + tail, 'e.cif', { energyItem: 'pred_energy' }));
      expect(rec.energy).toBeNull();
      expect(rec.notes.join()).toMatch(pattern);
    }
  });
  it('reads no energy when no item is named', () => {
    expect(record(readCifText(`${base}_pred_energy -1\n`, 'e.cif')).energy).toBeNull();
  });
});

describe('bad input: every block read or rejected with file, block, line and reason', () => {
  const cases: Array<[string, string, RegExp]> = [
    ['missing cell length', `data_b\n_cell_length_a 10\n_cell_length_b 12\n_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n${SITES}`, /no _cell_length_c/],
    ['non-numeric cell', CELL.replace('12.0', '12,0').replace(/^/, 'data_b\n') + SITES, /^line 3: _cell_length_b is '12,0', not a number/],
    ['unknown cell value', CELL.replace('8.0', '?').replace(/^/, 'data_b\n') + SITES, /^line 4: _cell_length_c is '\?'/],
    ['negative length', CELL.replace('8.0', '-8.0').replace(/^/, 'data_b\n') + SITES, /outside the possible range/],
    ['angles with no volume', `data_b\n_cell_length_a 5\n_cell_length_b 5\n_cell_length_c 5\n_cell_angle_alpha 120\n_cell_angle_beta 120\n_cell_angle_gamma 120\n${SITES}`, /zero or negative volume/],
    ['non-numeric coordinate', `data_b\n${CELL}${SITES}N2 N 0.1 abc 0.3\n`, /^line 16: y coordinate of site N2 is 'abc', not a number/],
    ['unknown element', `data_b\n${CELL}${SITES}Qq1 Qq 0.1 0.2 0.3\n`, /^line 16: .*Qq/],
    ['no atom sites', `data_b\n${CELL}`, /no atom sites/],
    ['no structure at all', `data_b\n_journal_year 2003\n_publ_section_title\n;\nA title\n;\n`, /holds no crystal structure/],
    ['Cartesian only', `data_b\n${CELL}loop_\n_atom_site_label\n_atom_site_Cartn_x\n_atom_site_Cartn_y\n_atom_site_Cartn_z\nC1 0 0 0\n`, /only in Cartesian/],
    ['loop count', `data_b\n${CELL}${SITES}N2 N 0.1 0.2\n`, /^line 8: loop_ .*14 values for 5 names/],
    ['unterminated quote', `data_b\n${CELL}_chemical_name 'never closed\n${SITES}`, /^line 8: quoted string/],
    ['unterminated text field', `data_b\n${CELL}_note\n;text\n${SITES}`, /^line 9: text field .* never closed/],
    ['negative occupancy', `data_b\n${CELL}loop_\n_atom_site_label\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\nC1 0 0 0 -1\n`, /occupancy of site C1 is '-1'/],
  ];
  for (const [what, text, reason] of cases) {
    it(`rejects: ${what}`, () => {
      const results = readCifText(`data_good\n${CELL}${SITES}${text}data_after\n${CELL}${SITES}`, 'bad.cif');
      expect(results.length).toBe(3);
      expect(record(results, 0).id).toBe('good');
      const r = rejected(results, 1);
      expect(r.file).toBe('bad.cif');
      expect(r.block).toBe('b');
      expect(r.source).toBe('bad.cif#b');
      expect(r.line).toBe(16);
      // Reasons name lines of the file, so shift the expected line by the 15 lines of the first block.
      const shifted = new RegExp(reason.source.replace(/line (\d+)/, (_m, n: string) => `line ${Number(n) + 15}`));
      expect(r.reason).toMatch(shifted);
      expect(r.text.startsWith('data_b\n')).toBe(true);
      expect(record(results, 2).id).toBe('after');
    });
  }

  it('notes a stated _cell_volume that disagrees with the cell by more than 0.5 %', () => {
    const v = cellVolumeA3({ a: 10, b: 12, c: 8, alpha: 90, beta: 100, gamma: 90 });
    // 10*12*8*sin(100 deg) = 945.416... (triclinic volume formula with alpha = gamma = 90)
    expect(v).toBeCloseTo(960 * Math.sin((100 * Math.PI) / 180), 9);
    const ok = record(readCifText(`data_v\n${CELL}_cell_volume 945.4(3)\n${SITES}`, 'v.cif'));
    expect(ok.notes.filter((n) => /_cell_volume/.test(n))).toEqual([]);
    const off = record(readCifText(`data_v\n${CELL}_cell_volume 960.0\n${SITES}`, 'v.cif'));
    expect(off.notes.join()).toMatch(/stated _cell_volume 960.0 differs from 945.42/);
  });

  it('rejects text before the first data_ line but still reads the blocks', () => {
    const results = readCifText(`_stray 1\ndata_a\n${CELL}${SITES}`, 'p.cif');
    expect(results.length).toBe(2);
    expect(rejected(results, 0).reason).toMatch(/before the first data_ line/);
    expect(record(results, 1).id).toBe('a');
  });

  it('turns an empty, comment-only or binary file into one file-level rejection with block ""', () => {
    for (const [text, reason] of [
      ['', /empty/],
      ['# only a comment\n\n', /no data_ block/],
      ['\u0000\u0001\u0002binary', /binary/],
    ] as const) {
      const results = readCifText(text, 'f.cif');
      expect(results.length).toBe(1);
      const r = rejected(results);
      expect(r.block).toBe('');
      expect(r.source).toBe('f.cif#');
      expect(r.reason).toMatch(reason);
    }
  });
});

describe('block splitting', () => {
  it('does not split at data_ inside a text field and keeps block lines', () => {
    const text = `data_one\n${CELL}_note\n;\ndata_not_a_block\n;\n${SITES}\ndata_two\n${CELL}${SITES}`;
    const results = readCifText(text, 'm.cif');
    expect(results.map((r) => (r.kind === 'record' ? r.record.id : 'rejected'))).toEqual(['one', 'two']);
    expect(record(results, 1).line).toBe(text.split('\n').indexOf('data_two') + 1);
    expect(results.map((r) => (r.kind === 'record' ? r.record.text : '')).join('')).toBe(text);
  });
});
