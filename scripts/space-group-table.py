#!/usr/bin/env python3
"""Write the data rows of src/geometry/space-group-table.ts (run once; the output is committed).

The 530 settings are the Hall-symbol table of International Tables for Crystallography Vol. B
(Table A1.4.2.7; Hall, "Space-group notation with an explicit origin", Acta Cryst. A 37, 1981), in its
order. Two reference libraries carry that table and are read here (Debian's python3-gemmi and
python3-spglib, through /usr/bin/python3):
  - gemmi.spacegroup_table(): number, Hall symbol, Hermann-Mauguin symbol of the setting, origin choice or
    axes ('1'/'2', 'H'/'R') and the axis/cell-choice code ('b1', '-c2', 'ba-c', ...);
  - spglib.get_spacegroup_type(hall_number): the full Hermann-Mauguin symbol of the setting.
The script checks that both libraries list the same Hall symbols in the same order before printing.
Only the symbols are taken: the product builds every operation from the Hall symbol with its own parser
(src/geometry/hall.ts), and the tests compare those operations with gemmi's, live.

gemmi's table also lists settings that are not among the 530 (centred cells of low-symmetry groups and a few
names of older programs); they are printed as a second list.

Usage: /usr/bin/python3 scripts/space-group-table.py > /tmp/rows.ts
"""
import gemmi
import spglib


def q(s):
    """A TypeScript string literal in single quotes (Hall symbols hold both ' and ")."""
    return "'" + s.replace('\\', '\\\\').replace("'", "\\'") + "'"


def main():
    table = list(gemmi.spacegroup_table())
    rows = []
    for i, sg in enumerate(table[:530]):
        t = spglib.get_spacegroup_type(i + 1)
        # The two libraries spell a few Hall symbols differently ('A -2yab' and 'A -2yac' differ by a centring
        # translation): what must agree is the group they generate. gemmi's spelling is kept.
        if gemmi.symops_from_hall(t['hall_symbol']) != gemmi.symops_from_hall(sg.hall):
            raise SystemExit(f'row {i + 1}: gemmi Hall {sg.hall!r} and spglib Hall {t["hall_symbol"]!r} are different groups')
        if t['number'] != sg.number:
            raise SystemExit(f'row {i + 1}: group numbers differ')
        origin = sg.ext if sg.ext != '\x00' else ''
        code = (origin if origin in ('1', '2') else '') + sg.qualifier + (origin if origin in ('H', 'R') else '')
        full = t['international_full'].replace('_', '')
        rows.append(f"  [{sg.number}, {q(sg.hall)}, {q(sg.hm)}, {q(code)}, {q(full)}],")
    print('const ITA_ROWS: readonly Row[] = [')
    print('\n'.join(rows))
    print('];')
    extra = []
    for sg in table[530:]:
        extra.append(f"  [{sg.number}, {q(sg.hall)}, {q(sg.hm)}, '', {q(sg.hm)}],")
    print('const OTHER_ROWS: readonly Row[] = [')
    print('\n'.join(extra))
    print('];')


main()
