// CIF 1.1 syntax rules, each checked against the IUCr "CIF version 1.1 syntax specification" (open standard):
// quoted strings close only before white space, text fields, ? and ., reserved words, case-insensitive names,
// loops, save frames. Expected values are what that specification says the text means.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cifColumn, cifNumber, CifSyntaxError, kindAt, lineAt, parseCifBlock, valueAt, ValueKind, type CifBlock } from '../src/io/cif.js';

function values(block: CifBlock, name: string): string[] {
  const col = cifColumn(block, name);
  if (col === null) throw new Error(`no ${name}`);
  const out: string[] = [];
  for (let i = 0; i < col.length; i++) out.push(valueAt(col, i));
  return out;
}

function kinds(block: CifBlock, name: string): ValueKind[] {
  const col = cifColumn(block, name)!;
  const out: ValueKind[] = [];
  for (let i = 0; i < col.length; i++) out.push(kindAt(col, i));
  return out;
}

function syntaxError(text: string): CifSyntaxError {
  try {
    parseCifBlock(text);
  } catch (e) {
    if (e instanceof CifSyntaxError) return e;
    throw e;
  }
  throw new Error('expected a CifSyntaxError');
}

describe('quoted strings (CIF 1.1: a quote closes only when white space follows)', () => {
  it("reads 'a'b' as the string a'b", () => {
    const b = parseCifBlock("data_x\n_t 'a'b'\n");
    expect(values(b, '_t')).toEqual(["a'b"]);
  });

  it("does not treat doubled quotes as an escape: 'it''s' is the string it''s", () => {
    const b = parseCifBlock("data_x\n_t 'it''s'\n");
    expect(values(b, '_t')).toEqual(["it''s"]);
  });

  it('keeps spaces inside quotes and allows the other quote character inside', () => {
    const b = parseCifBlock(`data_x\n_a 'P 21/c'\n_b "say 'hi' now"\n_c 'x, y, z'\n`);
    expect(values(b, '_a')).toEqual(['P 21/c']);
    expect(values(b, '_b')).toEqual(["say 'hi' now"]);
    expect(values(b, '_c')).toEqual(['x, y, z']);
  });

  it('takes a quote inside a bare word as part of the word', () => {
    const b = parseCifBlock("data_x\n_t C1'\n");
    expect(values(b, '_t')).toEqual(["C1'"]);
  });

  it('rejects a quote left open at the end of the line, naming the line', () => {
    const e = syntaxError("data_x\n_a 1\n_t 'open\n_b 2\n");
    expect(e.line).toBe(3);
    expect(e.message).toMatch(/not closed/);
  });

  it('marks quoted ? and . as ordinary strings, unquoted ones as unknown / inapplicable', () => {
    const b = parseCifBlock("data_x\n_a ?\n_b .\n_c '?'\n_d '.'\n");
    expect(kinds(b, '_a')).toEqual([ValueKind.Unknown]);
    expect(kinds(b, '_b')).toEqual([ValueKind.Inapplicable]);
    expect(kinds(b, '_c')).toEqual([ValueKind.Quoted]);
    expect(kinds(b, '_d')).toEqual([ValueKind.Quoted]);
  });
});

describe('semicolon text fields', () => {
  it('reads the lines between ; in column 1 and the next ; in column 1', () => {
    const b = parseCifBlock("data_x\n_t\n;first line\n second 'quoted' # not a comment\n;\n_u 5\n");
    expect(values(b, '_t')).toEqual(["first line\n second 'quoted' # not a comment"]);
    expect(kinds(b, '_t')).toEqual([ValueKind.TextField]);
    expect(values(b, '_u')).toEqual(['5']);
  });

  it('counts the lines inside a text field for later error lines', () => {
    const e = syntaxError('data_x\n_t\n;a\nb\nc\n;\n_u\n');
    expect(e.line).toBe(7);
  });

  it('rejects a text field that is never closed', () => {
    const e = syntaxError('data_x\n_t\n;never closed\nmore\n');
    expect(e.line).toBe(3);
    expect(e.message).toMatch(/never closed/);
  });

  it('does not open a text field for a ; that is not in column 1', () => {
    const b = parseCifBlock('data_x\n_t a;b\n_u  ;c\n');
    expect(values(b, '_t')).toEqual(['a;b']);
    expect(values(b, '_u')).toEqual([';c']);
  });
});

describe('numbers with standard uncertainties (CIF 1.1 numeric values)', () => {
  it('drops the su in parentheses', () => {
    expect(cifNumber('1.2345(6)')).toBe(1.2345);
    expect(cifNumber('-0.0123(12)')).toBe(-0.0123);
    expect(cifNumber('12(3)')).toBe(12);
  });

  it('reads signs, leading or trailing points and exponents', () => {
    expect(cifNumber('.5')).toBe(0.5);
    expect(cifNumber('-.25')).toBe(-0.25);
    expect(cifNumber('+3.')).toBe(3);
    expect(cifNumber('1.5e2')).toBe(150);
    expect(cifNumber('2E-1(3)')).toBe(0.2);
  });

  it('gives exactly the double that ECMAScript Number() gives for the same digits, with or without an su', () => {
    // Reference: the ECMAScript Number() string conversion (correctly rounded), on CIF-shaped numerals.
    const numeral = fc
      .tuple(
        fc.constantFrom('', '-', '+'),
        fc.stringMatching(/^[0-9]{0,12}$/),
        fc.boolean(),
        fc.stringMatching(/^[0-9]{0,12}$/),
        fc.option(fc.tuple(fc.constantFrom('e', 'E'), fc.constantFrom('', '-', '+'), fc.integer({ min: 0, max: 40 }))),
      )
      .filter(([, a, , b]) => a.length + b.length > 0)
      .map(([sign, a, point, b, exp]) => `${sign}${a}${point || b.length > 0 ? '.' : ''}${b}${exp === null ? '' : `${exp[0]}${exp[1]}${exp[2]}`}`);
    fc.assert(
      fc.property(numeral, fc.option(fc.nat(999)), (text, su) => {
        const expected = Number(text);
        expect(Object.is(cifNumber(text), expected)).toBe(true);
        if (su !== null) expect(Object.is(cifNumber(`${text}(${su})`), expected)).toBe(true);
      }),
      { numRuns: 3000, seed: 42 },
    );
  });

  it('returns NaN for text that is not a CIF number', () => {
    for (const t of ['', 'abc', '1.2.3', '1.2(', '1.2(3', '1.2(x)', '0x10', 'Infinity', '1e', '--1', '1/2']) {
      expect(Number.isNaN(cifNumber(t)), t).toBe(true);
    }
  });
});

describe('data names, reserved words, comments', () => {
  it('matches data names case-insensitively', () => {
    const b = parseCifBlock('data_x\n_Cell_Length_A 5.1\n');
    expect(values(b, '_cell_length_a')).toEqual(['5.1']);
    expect(values(b, '_CELL_LENGTH_A')).toEqual(['5.1']);
  });

  it('accepts reserved words in any case', () => {
    const b = parseCifBlock('DATA_blk\nLOOP_\n_a\n1\n2\n');
    expect(b.name).toBe('blk');
    expect(values(b, '_a')).toEqual(['1', '2']);
  });

  it('skips comments, including after values, but not # inside quotes', () => {
    const b = parseCifBlock("data_x # block\n# whole line\n_a 1 # after\n_b '#not'\n");
    expect(values(b, '_a')).toEqual(['1']);
    expect(values(b, '_b')).toEqual(['#not']);
  });

  it('reads several items and values on one line', () => {
    const b = parseCifBlock('data_x\n_a 1 _b 2\nloop_ _c _d 1 2 3 4\n');
    expect(values(b, '_a')).toEqual(['1']);
    expect(values(b, '_b')).toEqual(['2']);
    expect(values(b, '_c')).toEqual(['1', '3']);
    expect(values(b, '_d')).toEqual(['2', '4']);
  });

  it('skips save frames and records that it did', () => {
    const b = parseCifBlock('data_x\nsave_frame1\n_inside 1\nloop_ _q 1 2\nsave_\n_after 2\n');
    expect(b.items.has('_inside')).toBe(false);
    expect(b.items.has('_q')).toBe(false);
    expect(values(b, '_after')).toEqual(['2']);
    expect(b.warnings.join()).toMatch(/save_frame1/);
  });

  it('keeps the first of a repeated data name and warns', () => {
    const b = parseCifBlock('data_x\n_a 1\n_a 2\n');
    expect(values(b, '_a')).toEqual(['1']);
    expect(b.warnings[0]).toMatch(/_a appears twice/);
  });
});

describe('loops and structural errors', () => {
  it('reads loop values row by row with their lines', () => {
    const b = parseCifBlock('data_x\nloop_\n_s_id\n_s_xyz\n1 x,y,z\n2 -x,-y,-z\n');
    expect(values(b, '_s_xyz')).toEqual(['x,y,z', '-x,-y,-z']);
    const col = cifColumn(b, '_s_xyz')!;
    expect([lineAt(col, 0), lineAt(col, 1)]).toEqual([5, 6]);
  });

  it('rejects a loop whose value count is not a multiple of its names, naming the loop line and counts', () => {
    const e = syntaxError('data_x\n_a 1\nloop_\n_p\n_q\n_r\n1 2 3\n4 5\n');
    expect(e.line).toBe(3);
    expect(e.message).toMatch(/5 values for 3 names/);
  });

  it('rejects a data name with no value', () => {
    const e = syntaxError('data_x\n_a\n_b 1\n');
    expect(e.line).toBe(2);
    expect(e.message).toMatch(/_a has no value/);
  });

  it('rejects a value with no data name', () => {
    const e = syntaxError('data_x\n_a 1 2\n');
    expect(e.message).toMatch(/'2' has no data name/);
  });

  it('rejects an empty block name and an unclosed save frame', () => {
    expect(syntaxError('data_\n_a 1\n').message).toMatch(/block name/);
    expect(syntaxError('data_x\nsave_f\n_a 1\n').message).toMatch(/never closed/);
  });

  it('gives lines relative to the file when the block starts further down', () => {
    const e = syntaxError('data_x\n_a\n');
    expect(e.line).toBe(2);
    try {
      parseCifBlock('data_x\n_a\n', 100);
    } catch (err) {
      expect((err as CifSyntaxError).line).toBe(101);
    }
    expect.assertions(2);
  });
});
