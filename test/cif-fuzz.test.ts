// Property-based tests (fast-check) feeding the reader mutated CIF text: truncations, character flips,
// inserted quotes and semicolons, deleted lines. The reader must never throw or hang, must account for every
// piece of the text (each data_ block becomes exactly one record or rejection), must leave the blocks before
// the damage unchanged, and must give the same blocks whatever the chunk boundaries of the stream.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readCifText } from '../src/io/read.js';
import { CifBlockSplitter, type RawBlock } from '../src/io/cif-split.js';
import type { BlockResult } from '../src/types.js';

function block(name: string, shift: number): string {
  return `data_${name}
_cell_length_a ${(7 + shift).toFixed(3)}(2)
_cell_length_b 9.5
_cell_length_c 11.25
_cell_angle_alpha 90
_cell_angle_beta ${(95 + shift).toFixed(2)}
_cell_angle_gamma 90
_symmetry_space_group_name_H-M 'P 21/c'
_chemical_name_common 'invented molecule ${name}'
_pred_energy -${(100 + shift).toFixed(2)}
_note
;
 free text with 'quotes' and # hashes
 data_inside_a_text_field is not a block
;
loop_
_space_group_symop_id
_space_group_symop_operation_xyz
1 'x, y, z'
2 '-x, y+1/2, -z+1/2'
3 -x,-y,-z  4 x,1/2-y,1/2+z
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
_atom_site_occupancy
C1 C 0.1${shift} 0.2 0.3 1
O1 O 0.4 0.5(1) 0.6 .
N1 N 0.7 0.8 0.9 ?
H1 H ? ? ? 1
`;
}

const BLOCKS = ['a', 'b', 'c', 'd', 'e'].map((n, i) => block(`run_${n}`, i));
const TEXT = `# invented multi-block file\n${BLOCKS.join('\n')}`;

/** Texts of all results that hold text, joined: must be the input from its first data_ line (or prologue) on. */
function joinedText(results: BlockResult[]): string {
  return results.map((r) => (r.kind === 'record' ? r.record.text : r.rejected.text)).join('');
}

function names(results: BlockResult[]): string[] {
  return results.map((r) => (r.kind === 'record' ? r.record.block : r.rejected.block));
}

/** Lines starting (after blanks) with data_ and outside ; text fields, by the CIF 1.1 rule, as [line, name]. */
function dataLines(text: string): Array<[number, string]> {
  const out: Array<[number, string]> = [];
  let inField = false;
  const lines = text.split('\n');
  for (let i = 0; i < lines.length; i++) {
    const l = lines[i]!;
    if (l.startsWith(';')) {
      inField = !inField;
      continue;
    }
    if (inField) continue;
    const t = l.replace(/^[ \t]+/, '');
    if (/^data_/i.test(t)) out.push([i + 1, t.slice(5).split(/[ \t\r\f\v]/)[0]!]);
  }
  return out;
}

type Mutation =
  | { kind: 'truncate'; at: number }
  | { kind: 'replace'; at: number; ch: string }
  | { kind: 'insert'; at: number; ch: string }
  | { kind: 'deleteLine'; line: number };

const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('truncate' as const), at: fc.nat(TEXT.length) }),
  fc.record({ kind: fc.constant('replace' as const), at: fc.nat(TEXT.length - 1), ch: fc.constantFrom("'", '"', ';', '\n', '#', '_', ' ', 'x', '(', '?', '.', 'é', '\t') }),
  fc.record({ kind: fc.constant('insert' as const), at: fc.nat(TEXT.length), ch: fc.constantFrom("'", '"', ';', '\n;', '\ndata_', 'loop_ ', '_x ', ' ') }),
  fc.record({ kind: fc.constant('deleteLine' as const), line: fc.nat(TEXT.split('\n').length - 1) }),
);

function apply(text: string, m: Mutation): { text: string; at: number } {
  switch (m.kind) {
    case 'truncate':
      return { text: text.slice(0, m.at), at: m.at };
    case 'replace':
      return { text: text.slice(0, m.at) + m.ch + text.slice(m.at + 1), at: m.at };
    case 'insert':
      return { text: text.slice(0, m.at) + m.ch + text.slice(m.at), at: m.at };
    case 'deleteLine': {
      const lines = text.split('\n');
      const at = lines.slice(0, m.line).join('\n').length;
      lines.splice(m.line, 1);
      return { text: lines.join('\n'), at };
    }
  }
}

describe('mutated CIF text', () => {
  const clean = readCifText(TEXT, 'fuzz.cif');

  it('reads the unmutated file as five records', () => {
    expect(clean.map((r) => r.kind)).toEqual(['record', 'record', 'record', 'record', 'record']);
    expect(names(clean)).toEqual(BLOCKS.map((_, i) => `run_${'abcde'[i]}`));
  });

  it('never throws, accounts for all text, and keeps blocks before the damage unchanged', () => {
    fc.assert(
      fc.property(fc.array(mutation, { minLength: 1, maxLength: 4 }), (muts) => {
        let text = TEXT;
        let firstDamage = TEXT.length;
        for (const m of muts) {
          const r = apply(text, m);
          text = r.text;
          firstDamage = Math.min(firstDamage, r.at);
        }
        const results = readCifText(text, 'fuzz.cif');
        expect(results.length).toBeGreaterThan(0);

        // Every result has a reason or a record; rejections name file and line.
        for (const r of results) {
          if (r.kind === 'rejected') {
            expect(r.rejected.reason.length).toBeGreaterThan(0);
            expect(r.rejected.file).toBe('fuzz.cif');
            expect(r.rejected.line).toBeGreaterThanOrEqual(1);
          }
        }

        const found = dataLines(text);
        if (found.length === 0) return;
        // Nothing dropped or repeated: the results' texts are the input from the first block (or prologue) on.
        const joined = joinedText(results);
        expect(text.endsWith(joined)).toBe(true);
        const firstBlockStart = text.split('\n').slice(0, found[0]![0] - 1).join('\n').length + (found[0]![0] > 1 ? 1 : 0);
        expect(text.length - joined.length === firstBlockStart || text.length === joined.length).toBe(true);

        // Each data_ line outside text fields starts exactly one result (more only when an unclosed
        // text field had swallowed data_ lines that the splitter took back).
        const blockResults = results.filter((r) => r.kind === 'record' || /^[ \t]*data_/i.test(r.rejected.text));
        expect(blockResults.length).toBeGreaterThanOrEqual(found.length);
        const byLine = new Map(blockResults.map((r) => [r.kind === 'record' ? r.record.line : r.rejected.line, names([r])[0]]));
        for (const [line, name] of found) expect(byLine.get(line)).toBe(name);

        // Blocks that end before the first damaged character are read exactly as before, unless the damage
        // hits the next block's data_ line (the block then runs on into the next one's text).
        let offset = TEXT.indexOf('data_');
        for (let i = 0; i < BLOCKS.length; i++) {
          const len = BLOCKS[i]!.length + (i < BLOCKS.length - 1 ? 1 : 0);
          const nextHeader = i < BLOCKS.length - 1 ? BLOCKS[i + 1]!.indexOf('\n') + 1 : 0;
          if (offset + len + nextHeader >= firstDamage) break;
          expect(results[i]).toEqual(clean[i]);
          offset += len;
        }
      }),
      { numRuns: 400, seed: 20261202 },
    );
  });

  it('never throws on arbitrary printable text and control characters', () => {
    fc.assert(
      fc.property(fc.string({ unit: fc.constantFrom('d', 'a', 't', '_', ';', "'", '"', '\n', ' ', '#', 'l', 'o', 'p', '?', '1', '.', 'x', ',') , maxLength: 400 }), (s) => {
        const results = readCifText(s, 'junk.cif');
        expect(results.length).toBeGreaterThan(0);
      }),
      { numRuns: 400, seed: 7 },
    );
  });
});

describe('streaming: chunk boundaries do not matter', () => {
  function split(text: string, cuts: number[]): RawBlock[] {
    const sp = new CifBlockSplitter();
    const out: RawBlock[] = [];
    let prev = 0;
    for (const c of [...cuts].sort((a, b) => a - b)) {
      sp.push(text.slice(prev, c), out);
      prev = c;
    }
    sp.push(text.slice(prev), out);
    sp.end(out);
    return out;
  }

  it('gives the same blocks for any chunking of the text, mutated or not', () => {
    const whole = split(TEXT, []);
    expect(whole.map((b) => b.name)).toEqual(BLOCKS.map((_, i) => `run_${'abcde'[i]}`));
    fc.assert(
      fc.property(fc.array(fc.nat(TEXT.length), { maxLength: 30 }), mutation, (cuts, m) => {
        const text = apply(TEXT, m).text;
        const ref = split(text, []);
        const chunked = split(text, cuts.map((c) => Math.min(c, text.length)));
        expect(chunked).toEqual(ref);
      }),
      { numRuns: 300, seed: 11 },
    );
  });
});
