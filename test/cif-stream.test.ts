// The streaming path splits raw bytes (CifByteSplitter) before decoding. It must give exactly the blocks that the
// text splitter (CifBlockSplitter, whose rule test/cif-fuzz.test.ts pins to CIF 1.1: a block starts at a line
// whose first token is data_, outside ; text fields) gives on the decoded text, for any cut of the byte stream,
// including cuts inside UTF-8 multi-byte characters, unclosed text fields and text before the first data_ line.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { CifBlockSplitter, CifByteSplitter, type RawBlock } from '../src/io/cif-split.js';

function block(name: string): string {
  return `data_${name}
_cell_length_a 7.5(2)
_publ_author_name 'Müller, Zoë ∆'
_note
;
 data_inside_a_text_field is not a block
;
loop_
_atom_site_label
_atom_site_fract_x
C1 0.1
  DATA_${name}_indented
`;
}

const TEXT = `# prologue comment\n${['α', 'b', 'c'].map(block).join('\n')}`;

function byText(text: string): RawBlock[] {
  const sp = new CifBlockSplitter();
  const out: RawBlock[] = [];
  sp.push(text, out);
  sp.end(out);
  return out;
}

function byBytes(bytes: Buffer, cuts: number[]): RawBlock[] {
  const sp = new CifByteSplitter();
  const out: RawBlock[] = [];
  let prev = 0;
  for (const c of [...cuts].sort((a, b) => a - b)) {
    sp.push(bytes.subarray(prev, c), out);
    prev = c;
  }
  sp.push(bytes.subarray(prev), out);
  sp.end(out);
  return out;
}

const edit = fc.record({
  at: fc.nat(TEXT.length),
  del: fc.nat(3),
  ins: fc.constantFrom('', ';', '\n;', '\ndata_x', '\n  data_y z', 'é', '€', '\n', 'text ', '\r\n'),
});

describe('byte splitter', () => {
  it('splits the sample at data_ lines outside text fields, with their lines', () => {
    // Expected by reading TEXT: a comment line, then three blocks of 12 lines (data_ on the block's line 1, an
    // indented DATA_ line on its line 12) separated by one blank line; the data_ line in the text field is not a block.
    expect(byBytes(Buffer.from(TEXT), []).map((b) => [b.name, b.line])).toEqual([
      ['α', 2],
      ['α_indented', 13],
      ['b', 15],
      ['b_indented', 26],
      ['c', 28],
      ['c_indented', 39],
    ]);
  });

  it('gives the text splitter blocks for any edits and any cuts of the bytes', () => {
    fc.assert(
      fc.property(fc.array(edit, { maxLength: 4 }), fc.array(fc.nat(4 * TEXT.length), { maxLength: 30 }), (edits, cuts) => {
        let text = TEXT;
        for (const e of edits) text = text.slice(0, e.at) + e.ins + text.slice(e.at + e.del);
        const bytes = Buffer.from(text, 'utf8');
        expect(byBytes(bytes, cuts.map((c) => Math.min(c, bytes.length)))).toEqual(byText(text));
      }),
      { numRuns: 500, seed: 5 },
    );
  });

  it('reuses its buffer over a long stream of small pushes and grows it for a block larger than the buffer', () => {
    // 20000 copies of one block (about 6 MB, past the 4 MiB buffer, so emitted bytes are dropped and the rest
    // moved to the front), then one block of about 6 MB in a text field (the buffer must grow to hold it).
    const one = block('x');
    const big = `data_big\n_note\n;\n${'long line of text in a field\n'.repeat(220_000)};\n_cell_length_a 5\n`;
    const text = one.repeat(20000) + big;
    const bytes = Buffer.from(text, 'utf8');
    const cuts: number[] = [];
    for (let c = 65536; c < bytes.length; c += 65536) cuts.push(c);
    const got = byBytes(bytes, cuts);
    // Each copy of the block holds two data_ lines by the rule (its indented DATA_ line starts a block).
    expect(got.length).toBe(40001);
    expect(got).toEqual(byText(text));
    expect(got[got.length - 1]!.text).toBe(big);
  });
});
