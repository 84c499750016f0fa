// CIF 1.1 syntax (IUCr, "Crystallographic Information File" version 1.1 syntax specification, open standard):
// parses the text of ONE data block into data items and loops. Splitting a file into blocks is done by
// ./cif-split.ts; turning items into a crystal record by ./crystal-record.ts.
//
// Rules implemented (each pinned by test/cif-syntax.test.ts):
// - tokens are separated by white space (space, tab, CR, LF; other control characters, which CIF does not allow,
//   are taken as white space too); `#` outside a value starts a comment to end of line;
// - `'...'` / `"..."` quoted strings: the closing quote counts only when followed by white space or end of
//   text, so `'a'b'` is the string `a'b` (doubled quotes `''` are NOT an escape in CIF 1.1);
//   a quoted string cannot span lines;
// - `;` in column 1 opens a text field that ends at the next line beginning with `;`;
// - reserved words `data_`, `loop_`, `save_`, `global_`, `stop_` are case-insensitive; save frames are skipped;
// - `?` (unknown) and `.` (inapplicable) are special only when unquoted;
// - data names are matched case-insensitively (stored lower-cased);
// - numbers may carry a standard uncertainty in parentheses, `1.2345(6)` -> 1.2345 (see `cifNumber`).
// The scanner walks char codes; no regular expression runs per character.

/** How a value was written: bare, quoted or text field, or the special unquoted `?` / `.`. */
export enum ValueKind {
  Bare = 0,
  Quoted = 1,
  TextField = 2,
  Unknown = 3,
  Inapplicable = 4,
}

/**
 * A loop: `names.length` columns, values stored row-major in flat arrays (no object and no string per value):
 * each value is a range of the block text (inside the quotes or text-field markers) kept in the block's `values`.
 */
export interface CifLoop {
  /** Lower-cased data names, in the order written. */
  names: string[];
  /** Index in the block's `values` of the loop's first value; values follow row by row. */
  first: number;
  /** Number of values (a multiple of names.length). */
  count: number;
  /** 1-based line of `loop_`. */
  line: number;
}

/** Where one data name's value(s) live: a loop column or a single item. */
export interface CifItem {
  /** The loop holding this name, or null for a single item. */
  loop: CifLoop | null;
  /** Column within the loop; for a single item, the index of its value in the block's `values`. */
  col: number;
  /** Single item: its value's range in the block text, kind and line (unused for loop items). */
  start: number;
  end: number;
  kind: ValueKind;
  line: number;
}

export interface CifBlock {
  /** Block name as written after `data_`. */
  name: string;
  /** 1-based line of the `data_` line. */
  line: number;
  /** The block text that value ranges point into. */
  text: string;
  /** 1-based file line of the text's first character. */
  firstLine: number;
  /** Data name (lower-cased) -> where its values are. */
  items: Map<string, CifItem>;
  loops: CifLoop[];
  /**
   * Every value of the block (looped or single) as a triple: value v is text[values[3v], values[3v + 1]) with
   * ValueKind values[3v + 2]. One array per block, so parsing allocates little.
   */
  values: Int32Array;
  /** Things that are not fatal but a user should hear about (duplicate names, skipped save frames). */
  warnings: string[];
}

/** A syntax error with the 1-based line it was found on. */
export class CifSyntaxError extends Error {
  constructor(
    message: string,
    readonly line: number,
  ) {
    super(message);
    this.name = 'CifSyntaxError';
  }
}

/** A column of values: the loop column or a single item seen as a one-value column. */
export interface CifColumn {
  /** Block text; value i of the column is block value k = offset + i * stride (see CifBlock.values). */
  text: string;
  values: Int32Array;
  /** The loop the values come from (null for a single item): columns of one loop share it. */
  loop: CifLoop | null;
  /** 1-based file line of the block text's first character (lines of values are counted from it on demand). */
  firstLine: number;
  /** Stride through the arrays (loop width; 1 for single items) and starting offset. */
  stride: number;
  offset: number;
  /** Number of values. */
  length: number;
}

/** The values of `name` (case-insensitive) as a column, or null when the block does not have it. */
export function cifColumn(block: CifBlock, name: string): CifColumn | null {
  const item = block.items.get(lowerQuery(name));
  if (!item) return null;
  if (item.loop === null) {
    return { text: block.text, values: block.values, loop: null, firstLine: block.firstLine, stride: 1, offset: item.col, length: 1 };
  }
  const w = item.loop.names.length;
  return {
    text: block.text,
    values: block.values,
    loop: item.loop,
    firstLine: block.firstLine,
    stride: w,
    offset: item.loop.first + item.col,
    length: item.loop.count / w,
  };
}

/**
 * Names asked for, lower-cased once: they are few (the reader's own lists and the energy item), and lower-casing
 * a mixed-case name on every lookup made a new string, and hashed it, per block.
 */
const lowerQueries = new Map<string, string>();

function lowerQuery(name: string): string {
  let lower = lowerQueries.get(name);
  if (lower === undefined) {
    lower = name.toLowerCase();
    if (lowerQueries.size >= 1024) lowerQueries.clear();
    lowerQueries.set(name, lower);
  }
  return lower;
}

/** Text of value i of a column. */
export function valueAt(col: CifColumn, i: number): string {
  const k = col.offset + i * col.stride;
  return col.text.slice(col.values[3 * k], col.values[3 * k + 1]);
}

/** Value i of a column as a CIF number (NaN when it is not one); parsed in place, no string made. */
export function numberAt(col: CifColumn, i: number): number {
  const k = col.offset + i * col.stride;
  return cifNumberIn(col.text, col.values[3 * k]!, col.values[3 * k + 1]!);
}

export function kindAt(col: CifColumn, i: number): ValueKind {
  return col.values[3 * (col.offset + i * col.stride) + 2] as ValueKind;
}

/** 1-based file line of value i of a column (counted on demand: lines are needed only in messages). */
export function lineAt(col: CifColumn, i: number): number {
  const end = col.values[3 * (col.offset + i * col.stride)]!;
  let line = col.firstLine;
  for (let p = col.text.indexOf('\n'); p >= 0 && p < end; p = col.text.indexOf('\n', p + 1)) line++;
  return line;
}

/** True when values i and j of a column (i before j) sit on the same line. */
export function sameLineAt(col: CifColumn, i: number, j: number): boolean {
  const from = col.values[3 * (col.offset + i * col.stride) + 1]!;
  const to = col.values[3 * (col.offset + j * col.stride)]!;
  const p = col.text.indexOf('\n', from);
  return p < 0 || p >= to;
}

/** True when value i is the unquoted `?` or `.` (unknown or inapplicable). */
export function isMissingAt(col: CifColumn, i: number): boolean {
  const k = col.values[3 * (col.offset + i * col.stride) + 2] as ValueKind;
  return k === ValueKind.Unknown || k === ValueKind.Inapplicable;
}

/**
 * Parse a CIF number, dropping a trailing standard uncertainty: `1.2345(6)` -> 1.2345, `-.5` -> -0.5, `1e3`.
 * Returns NaN when the text is not a CIF number (CIF 1.1 numeric form: optional sign, digits with an optional
 * point, optional exponent, optional `(su)`).
 */
export function cifNumber(text: string): number {
  return cifNumberIn(text, 0, text.length);
}

/** `cifNumber` of text[from, to), read in place. */
export function cifNumberIn(text: string, from: number, to: number): number {
  const n = to;
  let i = from;
  let negative = false;
  let c = n > from ? text.charCodeAt(from) : 0;
  if (c === 43 || c === 45) {
    negative = c === 45;
    i++;
  }
  // Mantissa digits are gathered as an integer, exact while there are at most 15 digits (< 2^53), for the
  // fast path below.
  let mantissa = 0;
  const intStart = i;
  while (i < n && isDigit((c = text.charCodeAt(i)))) {
    mantissa = mantissa * 10 + (c - 48);
    i++;
  }
  let digits = i - intStart;
  let scale = 0;
  if (i < n && text.charCodeAt(i) === 46) {
    i++;
    const fracStart = i;
    while (i < n && isDigit((c = text.charCodeAt(i)))) {
      mantissa = mantissa * 10 + (c - 48);
      i++;
    }
    scale = fracStart - i;
    digits -= scale;
  }
  if (digits === 0) return NaN;
  let exponent = 0;
  c = i < n ? text.charCodeAt(i) : 0;
  if (c === 101 || c === 69) {
    // e / E exponent
    let j = i + 1;
    let expNegative = false;
    const d = j < n ? text.charCodeAt(j) : 0;
    if (d === 43 || d === 45) {
      expNegative = d === 45;
      j++;
    }
    const start = j;
    while (j < n && isDigit(text.charCodeAt(j))) {
      if (exponent < 100000) exponent = exponent * 10 + (text.charCodeAt(j) - 48);
      j++;
    }
    if (j === start) return NaN;
    if (expNegative) exponent = -exponent;
    i = j;
  }
  const end = i;
  if (i < n && text.charCodeAt(i) === 40) {
    // standard uncertainty "(digits)" must close the value
    i++;
    const start = i;
    while (i < n && isDigit(text.charCodeAt(i))) i++;
    if (i === start || i >= n || text.charCodeAt(i) !== 41) return NaN;
    i++;
  }
  if (i !== n) return NaN;
  // Fast path (Clinger, "How to read floating point numbers accurately", PLDI 1990): an integer mantissa
  // below 2^53 scaled by an exact power of ten (|k| <= 22) is rounded once, so it equals Number(text).
  const k = scale + exponent;
  if (digits <= 15 && k >= -22 && k <= 22) {
    const v = k < 0 ? mantissa / POW10[-k]! : mantissa * POW10[k]!;
    return negative ? -v : v;
  }
  return Number(text.slice(from, end));
}

/** Exact powers of ten 10^0 .. 10^22 (all exactly representable as doubles). */
const POW10: number[] = [];
for (let k = 0, p = 1; k <= 22; k++, p *= 10) POW10.push(p);

/**
 * Parse the text of one data block (starting at its `data_` token) into items and loops.
 * `firstLine` is the 1-based line of the text's first character in the file, so errors name file lines.
 * Throws CifSyntaxError (with the line) on text that is not CIF 1.1.
 */
export function parseCifBlock(text: string, firstLine = 1): CifBlock {
  const block = parseCifBlockShared(text, firstLine);
  block.values = block.values.slice(0, 3 * scratch.count);
  return block;
}

/**
 * parseCifBlock without copying the value ranges out: `values` is a scratch array shared by all parses, valid
 * only until the next parse. For callers that are done with the block before parsing another (saves one
 * array allocation per block on the streaming path).
 */
export function parseCifBlockShared(text: string, firstLine = 1): CifBlock {
  const t = new Tokenizer(text, firstLine);
  let tok = t.next();
  // A block may be preceded by comments only; its first token must be data_.
  if (tok !== TokenType.DataHeader) {
    throw new CifSyntaxError(tok === TokenType.End ? 'no data_ block found' : `expected a data_ line, found '${clip(text.slice(t.start, t.end))}'`, t.line);
  }
  const block: CifBlock = { name: t.value, line: t.line, text, firstLine, items: new Map(), loops: [], values: NO_VALUES, warnings: [] };
  // Value ranges are gathered in a reused scratch array and copied out at exact size (one allocation per block).
  const vals = scratch;
  vals.count = 0;
  if (block.name.length === 0) throw new CifSyntaxError("'data_' must be followed by a block name", t.line);

  tok = t.next();
  while (tok !== TokenType.End) {
    switch (tok) {
      case TokenType.Name: {
        const name = t.value;
        const nameLine = t.line;
        tok = t.next();
        if (!isValue(tok)) {
          throw new CifSyntaxError(`data name ${name} has no value`, nameLine);
        }
        if (addItem(block, name, { loop: null, col: vals.count, start: t.start, end: t.end, kind: t.kind, line: t.line }, nameLine)) {
          vals.add(t.start, t.end, t.kind);
        }
        tok = t.next();
        break;
      }
      case TokenType.Loop: {
        const loop: CifLoop = { names: [], first: vals.count, count: 0, line: t.line };
        tok = t.next();
        while (tok === TokenType.Name) {
          loop.names.push(t.value);
          tok = t.next();
        }
        if (loop.names.length === 0) throw new CifSyntaxError('loop_ has no data names', loop.line);
        while (isValue(tok)) {
          vals.add(t.start, t.end, t.kind);
          tok = t.next();
        }
        const w = loop.names.length;
        const count = vals.count - loop.first;
        loop.count = count;
        if (count === 0) {
          throw new CifSyntaxError(`loop_ (${loop.names[0]} ...) has names but no values`, loop.line);
        }
        if (count % w !== 0) {
          throw new CifSyntaxError(
            `loop_ (${loop.names[0]} ...) has ${count} values for ${w} names, not a whole number of rows ` +
              `(${count % w} values too many or ${w - (count % w)} missing); ` +
              `check for a value with spaces that needs quotes, or a missing value (write ? for unknown)`,
            loop.line,
          );
        }
        block.loops.push(loop);
        for (let c = 0; c < w; c++) {
          addItem(block, loop.names[c]!, { loop, col: c, start: 0, end: 0, kind: ValueKind.Bare, line: loop.line }, loop.line);
        }
        break;
      }
      case TokenType.SaveHeader: {
        // Save frames hold dictionary definitions, not structures: skip to the closing save_.
        const frameLine = t.line;
        const frameName = t.value;
        if (frameName.length === 0) throw new CifSyntaxError("'save_' closes a frame that was never opened", frameLine);
        for (;;) {
          tok = t.next();
          if (tok === TokenType.End) throw new CifSyntaxError(`save frame save_${frameName} is never closed (no 'save_' line)`, frameLine);
          if (tok === TokenType.SaveHeader && t.value.length === 0) break;
          if (tok === TokenType.SaveHeader) {
            throw new CifSyntaxError(`save frame save_${frameName} opens another frame before it is closed`, t.line);
          }
        }
        block.warnings.push(`save frame save_${frameName} (line ${frameLine}) skipped`);
        tok = t.next();
        break;
      }
      case TokenType.DataHeader:
        throw new CifSyntaxError(`a second data_ line inside one block (data_${t.value})`, t.line);
      case TokenType.Global:
      case TokenType.Stop:
        throw new CifSyntaxError(`'${t.value}' is a reserved word not allowed in CIF 1.1 data`, t.line);
      default:
        // A value with no data name before it.
        throw new CifSyntaxError(`value '${clip(text.slice(t.start, t.end))}' has no data name before it`, t.line);
    }
  }
  block.values = vals.data;
  return block;
}

/** Growable list of value triples (start, end, kind), reused from block to block. */
class ValueScratch {
  data = new Int32Array(3 * 1024);
  count = 0;

  add(start: number, end: number, kind: ValueKind): void {
    const at = 3 * this.count;
    if (at === this.data.length) {
      const grown = new Int32Array(2 * at);
      grown.set(this.data);
      this.data = grown;
    }
    this.data[at] = start;
    this.data[at + 1] = end;
    this.data[at + 2] = kind;
    this.count++;
  }
}

const scratch = new ValueScratch();
const NO_VALUES = new Int32Array(0);

// ---- tokenizer -------------------------------------------------------------------------------------

const enum TokenType {
  End,
  DataHeader,
  Loop,
  SaveHeader,
  Global,
  Stop,
  Name,
  Value,
}

function isValue(tok: TokenType): boolean {
  return tok === TokenType.Value;
}

/** Lower-cased data names seen before, by hash slot: a block repeats the names of the blocks before it. */
const NAME_SLOTS = 4096;
const nameSlots: (string | undefined)[] = new Array(NAME_SLOTS).fill(undefined);

/** FNV-1a hash constants (Fowler, Noll, Vo; common practice), 32-bit. */
const FNV_OFFSET = 0x811c9dc5;
const FNV_PRIME = 0x01000193;

/**
 * s[i, j) (an ASCII name whose FNV-1a hash of ASCII-lower-cased characters is `hash`) lower-cased, taken from
 * `nameSlots` when the same name in any case was seen before, so the common case makes no new string.
 */
function lowerName(s: string, i: number, j: number, hash: number): string {
  const slot = (hash >>> 0) & (NAME_SLOTS - 1);
  const seen = nameSlots[slot];
  if (seen !== undefined && seen.length === j - i) {
    let k = i;
    for (; k < j; k++) {
      let c = s.charCodeAt(k);
      if (c >= 65 && c <= 90) c += 32;
      if (c !== seen.charCodeAt(k - i)) break;
    }
    if (k === j) return seen;
  }
  const name = s.slice(i, j).toLowerCase();
  nameSlots[slot] = name;
  return name;
}

/** Walks the block text once; `next()` returns the token type and leaves its text in `value`. */
class Tokenizer {
  private pos = 0;
  /** Line of the current position. */
  private curLine: number;
  /** Text of the last name or reserved-word token; range, kind and line of the last token. */
  value = '';
  start = 0;
  end = 0;
  kind: ValueKind = ValueKind.Bare;
  line: number;

  constructor(
    private readonly s: string,
    firstLine: number,
  ) {
    this.curLine = firstLine;
    this.line = firstLine;
  }

  next(): TokenType {
    const s = this.s;
    const n = s.length;
    let i = this.pos;
    // Skip white space and comments, counting lines.
    for (;;) {
      if (i >= n) {
        this.pos = i;
        this.line = this.curLine;
        return TokenType.End;
      }
      const c = s.charCodeAt(i);
      if (c === 10) {
        this.curLine++;
        i++;
      } else if (c <= 32) {
        // space, tab, CR, FF, VT (other control characters, not allowed in CIF, also separate tokens)
        i++;
      } else if (c === 35) {
        // # comment to end of line
        const e = s.indexOf('\n', i);
        i = e < 0 ? n : e;
      } else {
        break;
      }
    }
    this.line = this.curLine;
    const c = s.charCodeAt(i);

    if (c === 59 && (i === 0 || s.charCodeAt(i - 1) === 10 || s.charCodeAt(i - 1) === 13)) {
      // ; text field: runs to the next line that begins with ;
      let j = i + 1;
      for (;;) {
        const e = s.indexOf('\n', j);
        if (e < 0) {
          throw new CifSyntaxError("text field opened with ';' is never closed (no line starting with ';')", this.line);
        }
        this.curLine++;
        if (s.charCodeAt(e + 1) === 59) {
          // Value is everything after the opening ; up to the line break before the closing ;
          let end = e;
          if (end > i + 1 && s.charCodeAt(end - 1) === 13) end--;
          this.start = i + 1;
          this.end = end;
          this.kind = ValueKind.TextField;
          this.pos = e + 2;
          return TokenType.Value;
        }
        j = e + 1;
      }
    }

    if (c === 39 || c === 34) {
      // quoted string: the closing quote must be followed by white space or end of text
      let j = i + 1;
      for (;;) {
        if (j >= n) throw new CifSyntaxError(`quoted string ${clip(s.slice(i, j))} is never closed`, this.line);
        const d = s.charCodeAt(j);
        if (d === 10 || d === 13) throw new CifSyntaxError(`quoted string ${clip(s.slice(i, j))} is not closed on its line`, this.line);
        if (d === c && (j + 1 >= n || s.charCodeAt(j + 1) <= 32)) break;
        j++;
      }
      this.start = i + 1;
      this.end = j;
      this.kind = ValueKind.Quoted;
      this.pos = j + 1;
      return TokenType.Value;
    }

    if (c === 95) {
      // _name: runs to white space; hashed on the way for lowerName.
      let h = Math.imul(FNV_OFFSET ^ 95, FNV_PRIME);
      let ascii = true;
      let j = i + 1;
      for (; j < n; j++) {
        let d = s.charCodeAt(j);
        if (d <= 32) break;
        if (d >= 128) ascii = false;
        else if (d >= 65 && d <= 90) d += 32;
        h = Math.imul(h ^ d, FNV_PRIME);
      }
      this.pos = j;
      this.start = i;
      this.end = j;
      // Lower-cased, as names match case-insensitively.
      this.value = ascii ? lowerName(s, i, j, h) : s.slice(i, j).toLowerCase();
      return TokenType.Name;
    }
    // Bare token: runs to white space.
    let j = i + 1;
    while (j < n && s.charCodeAt(j) > 32) j++;
    this.pos = j;
    const len = j - i;
    this.start = i;
    this.end = j;
    if (len === 1 && c === 63) {
      this.kind = ValueKind.Unknown;
      return TokenType.Value;
    }
    if (len === 1 && c === 46) {
      this.kind = ValueKind.Inapplicable;
      return TokenType.Value;
    }
    // Reserved words (case-insensitive): data_, loop_, save_, global_, stop_
    const c0 = c | 32;
    if (len >= 5 && (c0 === 100 || c0 === 108 || c0 === 115 || c0 === 103)) {
      if (c0 === 100 && startsWithCi(s, i, 'data_')) {
        this.value = s.slice(i + 5, j);
        return TokenType.DataHeader;
      }
      if (c0 === 108 && len === 5 && startsWithCi(s, i, 'loop_')) {
        this.value = 'loop_';
        return TokenType.Loop;
      }
      if (c0 === 115 && startsWithCi(s, i, 'save_')) {
        this.value = s.slice(i + 5, j);
        return TokenType.SaveHeader;
      }
      if (c0 === 115 && len === 5 && startsWithCi(s, i, 'stop_')) {
        this.value = 'stop_';
        return TokenType.Stop;
      }
      if (c0 === 103 && len === 7 && startsWithCi(s, i, 'global_')) {
        this.value = 'global_';
        return TokenType.Global;
      }
    }
    this.kind = ValueKind.Bare;
    return TokenType.Value;
  }
}

/** Record a data name; false when the name was already there (the first is kept). */
function addItem(block: CifBlock, name: string, item: CifItem, line: number): boolean {
  if (block.items.has(name)) {
    // CIF 1.1 forbids a name twice in a block; keep the first and say so.
    block.warnings.push(`data name ${name} appears twice (line ${line}); the first value is used`);
    return false;
  }
  block.items.set(name, item);
  return true;
}

function isDigit(c: number): boolean {
  return c >= 48 && c <= 57;
}

/** Case-insensitive match of an ASCII lower-case word at position i. */
function startsWithCi(s: string, i: number, word: string): boolean {
  for (let k = 0; k < word.length; k++) {
    const c = s.charCodeAt(i + k);
    const w = word.charCodeAt(k);
    if (c !== w && (c | 32) !== w) return false;
  }
  return true;
}

function clip(v: string): string {
  return v.length > 40 ? `${v.slice(0, 37)}...` : v;
}
