// Splits a stream of CIF text into data blocks without holding the whole file: a block starts at a line whose
// first token is `data_...`, unless that line lies inside a semicolon text field (CIF 1.1: a text field opens
// and closes with a `;` in column 1, and a quoted string cannot span lines, so a per-line state is exact).
// Only whole lines are examined; a partial last line is carried to the next chunk.
// Two splitters apply the same rule: CifBlockSplitter on text (readCifText, text already in memory) and
// CifByteSplitter on raw bytes before decoding (the streaming path in ./read.ts); test/cif-stream.test.ts checks
// that they agree for any cut of the stream.

import { isAscii } from 'node:buffer';

/** One block's text exactly as read, from the start of its `data_` line to the start of the next. */
export interface RawBlock {
  /** Block name after `data_` (as written); "" for text before the first data_ line. */
  name: string;
  /** 1-based line of the `data_` line (of the first line for text before any data_). */
  line: number;
  text: string;
  /** True for text before the first data_ line that holds more than comments and white space. */
  beforeFirstBlock: boolean;
}

/** Text before the first data_ line is kept up to this many characters (only to report it). */
const MAX_PROLOGUE_CHARS = 1 << 20;

export class CifBlockSplitter {
  /** Text of the current block from earlier chunks. */
  private parts: string[] = [];
  private name = '';
  private line: number;
  /** False until the first data_ line: text is then the prologue. */
  private inBlock = false;
  private prologueHasContent = false;
  private prologueChars = 0;
  private inTextField = false;
  /** Partial last line of the previous chunk and the line number where it starts. */
  private carry = '';
  private lineNo: number;
  /** Blocks seen so far (data_ lines). */
  blockCount = 0;

  /** Feed the next piece of text; complete blocks are appended to `out`. */
  push(chunk: string, out: RawBlock[]): void {
    const s = this.carry.length > 0 ? this.carry + chunk : chunk;
    let pos = 0;
    let segStart = 0;
    for (;;) {
      const e = s.indexOf('\n', pos);
      if (e < 0) break;
      segStart = this.examineLine(s, pos, segStart, out);
      pos = e + 1;
      this.lineNo++;
    }
    this.keep(s, segStart, pos);
    this.carry = pos < s.length ? s.slice(pos) : '';
  }

  constructor(firstLine = 1) {
    this.lineNo = firstLine;
    this.line = firstLine;
  }

  /**
   * Flush at end of input: the last line (without a final newline) and the last block.
   * A text field still open at the end has swallowed everything after it; the data_ lines it swallowed are
   * taken as block starts again so that one unclosed `;` costs one block, not the rest of the file.
   */
  end(out: RawBlock[]): void {
    const s = this.carry;
    this.carry = '';
    let segStart = 0;
    if (s.length > 0) segStart = this.examineLine(s, 0, 0, out);
    this.keep(s, segStart, s.length);
    if (this.inTextField && this.inBlock) {
      const text = this.parts.join('');
      const cut = swallowedBlockStart(text);
      if (cut !== null) {
        this.parts = [text.slice(0, cut.offset)];
        this.finish(out);
        const rest = new CifBlockSplitter(this.line + cut.lines);
        rest.push(text.slice(cut.offset), out);
        rest.end(out);
        return;
      }
    }
    this.finish(out);
  }

  /** The block being read (for reporting a read failure), or null before the first data_ line. */
  get current(): { name: string; line: number } | null {
    return this.inBlock ? { name: this.name, line: this.line } : null;
  }

  /** Line number reached so far (1-based). */
  get linesRead(): number {
    return this.lineNo;
  }

  /** True while the stream is inside a `;` text field (used to report truncation). */
  get openTextField(): boolean {
    return this.inTextField;
  }

  /**
   * Look at the line starting at `pos`: toggle text-field state on a leading `;`, start a new block on `data_`.
   * Returns the start of the current block's text within `s`.
   */
  private examineLine(s: string, pos: number, segStart: number, out: RawBlock[]): number {
    const c = s.charCodeAt(pos);
    if (c === 59) {
      this.inTextField = !this.inTextField;
      if (!this.inBlock) this.prologueHasContent = true;
      return segStart;
    }
    if (this.inTextField) return segStart;
    let k = pos;
    while (k < s.length && (s.charCodeAt(k) === 32 || s.charCodeAt(k) === 9)) k++;
    const d = s.charCodeAt(k);
    if ((d === 100 || d === 68) && isDataWord(s, k)) {
      this.keep(s, segStart, pos);
      this.finish(out);
      let j = k + 5;
      while (j < s.length && !isSpace(s.charCodeAt(j))) j++;
      this.name = s.slice(k + 5, j);
      this.line = this.lineNo;
      this.inBlock = true;
      this.blockCount++;
      return pos;
    }
    if (!this.inBlock && !this.prologueHasContent && k < s.length && d !== 35 && d !== 10 && d !== 13) {
      this.prologueHasContent = true;
    }
    return segStart;
  }

  /** Add s[from, to) to the current block's text. */
  private keep(s: string, from: number, to: number): void {
    if (to <= from) return;
    if (!this.inBlock) {
      if (this.prologueChars >= MAX_PROLOGUE_CHARS) return;
      const piece = s.slice(from, Math.min(to, from + MAX_PROLOGUE_CHARS - this.prologueChars));
      this.prologueChars += piece.length;
      this.parts.push(piece);
      return;
    }
    this.parts.push(s.slice(from, to));
  }

  /** Emit the current block (or a prologue with content) and start empty. */
  private finish(out: RawBlock[]): void {
    const text = this.parts.length === 1 ? this.parts[0]! : this.parts.join('');
    this.parts = [];
    if (this.inBlock) {
      out.push({ name: this.name, line: this.line, text, beforeFirstBlock: false });
    } else if (this.prologueHasContent) {
      out.push({ name: '', line: 1, text, beforeFirstBlock: true });
      this.prologueHasContent = false;
    }
  }
}

/**
 * In a block whose last text field never closes: the offset (and line count before it) of the first data_ line
 * after the unmatched opening `;`, or null when there is none.
 */
function swallowedBlockStart(text: string): { offset: number; lines: number } | null {
  let open = -1;
  let openLine = 0;
  let pos = 0;
  let line = 0;
  while (pos < text.length) {
    if (text.charCodeAt(pos) === 59) {
      if (open < 0) {
        open = pos;
        openLine = line;
      } else open = -1;
    }
    const e = text.indexOf('\n', pos);
    if (e < 0) break;
    pos = e + 1;
    line++;
  }
  if (open < 0) return null;
  pos = open;
  line = openLine;
  for (;;) {
    const e = text.indexOf('\n', pos);
    if (e < 0) return null;
    pos = e + 1;
    line++;
    let k = pos;
    while (k < text.length && (text.charCodeAt(k) === 32 || text.charCodeAt(k) === 9)) k++;
    const d = text.charCodeAt(k);
    if ((d === 100 || d === 68) && isDataWord(text, k)) return { offset: pos, lines: line };
  }
}

function isDataWord(s: string, k: number): boolean {
  return (
    (s.charCodeAt(k + 1) | 32) === 97 &&
    (s.charCodeAt(k + 2) | 32) === 116 &&
    (s.charCodeAt(k + 3) | 32) === 97 &&
    s.charCodeAt(k + 4) === 95
  );
}

function isSpace(c: number): boolean {
  return c === 32 || c === 10 || c === 13 || c === 9 || c === 12 || c === 11;
}

// ---- byte splitter (the streaming path) ----------------------------------------------------------------

/** Starting size of the byte splitter's buffer; it grows only to hold a line or block larger than this. */
const BYTE_BUFFER_START = 1 << 22;
/** Prologue bytes kept: enough for MAX_PROLOGUE_CHARS UTF-16 units (a unit takes at most 3 UTF-8 bytes). */
const MAX_PROLOGUE_BYTES = 3 * MAX_PROLOGUE_CHARS;

/**
 * The same split as CifBlockSplitter, done on the raw bytes of a UTF-8 (or ASCII) stream before any decoding:
 * the markers it looks for (`\n`, `;`, `data_`, blanks) are ASCII, and a UTF-8 multi-byte sequence never holds
 * an ASCII byte, so block boundaries found on bytes are the ones found on the decoded text. Each block is then
 * decoded once, as one piece (Latin-1 copy when all bytes are ASCII, UTF-8 otherwise). Bytes are kept in one
 * reused buffer holding only the block in progress, so memory stays flat.
 */
export class CifByteSplitter {
  private buf: Buffer = Buffer.allocUnsafe(BYTE_BUFFER_START);
  /** Valid bytes in buf. */
  private len = 0;
  /** Start of the current block's (or prologue's) bytes in buf. */
  private segStart = 0;
  /** Start of the first line not yet examined. */
  private lineStart = 0;
  private name = '';
  private line = 1;
  private inBlock = false;
  private prologueHasContent = false;
  /** Prologue bytes moved out of buf (capped at MAX_PROLOGUE_BYTES) so a long prologue does not grow buf. */
  private prologueParts: Buffer[] = [];
  private prologueBytes = 0;
  private inTextField = false;
  private lineNo = 1;
  /** True once `close` is called: no more bytes will come. */
  private closed = false;
  /** Blocks found at the end of input, waiting to be taken by `next`. */
  private pending: RawBlock[] = [];
  /** Blocks seen so far (data_ lines). */
  blockCount = 0;

  /**
   * Add the next bytes (copied: the caller may reuse its buffer). Take every block with `next` before writing
   * again; only then are the bytes of returned blocks dropped.
   */
  write(bytes: Uint8Array): void {
    this.makeRoom(bytes.length);
    this.buf.set(bytes, this.len);
    this.len += bytes.length;
  }

  /** Mark the end of input; `next` then also returns the last block. */
  close(): void {
    this.closed = true;
  }

  /**
   * The next complete block, decoded (only now, so that just one block's text is alive at a time), or null when
   * more bytes are needed (or, after `close`, when every block has been returned).
   */
  next(): RawBlock | null {
    if (this.pending.length > 0) return this.pending.shift()!;
    // A view ending at the valid bytes, so the native search for '\n' never looks at stale bytes.
    const view = this.buf.subarray(0, this.len);
    let pos = this.lineStart;
    for (;;) {
      const e = view.indexOf(10, pos);
      if (e < 0) break;
      // Only a line starting with ';', 'd'/'D' or a blank can change anything once a block is open.
      const c = view[pos]!;
      let done: RawBlock | null = null;
      if (c === 59 || !this.inBlock || (!this.inTextField && (c === 100 || c === 68 || c === 32 || c === 9))) {
        done = this.examineLine(pos, e + 1);
      }
      this.lineNo++;
      pos = e + 1;
      if (done !== null) {
        this.lineStart = pos;
        return done;
      }
    }
    this.lineStart = pos;
    if (!this.closed) return null;
    this.endOfInput();
    return this.pending.length > 0 ? this.pending.shift()! : null;
  }

  /** Feed bytes and collect the complete blocks into `out` (write, then next until null). */
  push(bytes: Uint8Array, out: RawBlock[]): void {
    this.write(bytes);
    for (let b = this.next(); b !== null; b = this.next()) out.push(b);
  }

  /** End of input: collect the remaining blocks into `out`. */
  end(out: RawBlock[]): void {
    this.close();
    for (let b = this.next(); b !== null; b = this.next()) out.push(b);
  }

  /** The block being read (for reporting a read failure), or null before the first data_ line. */
  get current(): { name: string; line: number } | null {
    return this.inBlock ? { name: this.name, line: this.line } : null;
  }

  /** Line number reached so far (1-based). */
  get linesRead(): number {
    return this.lineNo;
  }

  /**
   * The last line (without a final newline) and the last block, with the same handling of a text field left
   * open as CifBlockSplitter.end. Results go to `pending`; runs once.
   */
  private endOfInput(): void {
    if (this.segStart >= this.len && !this.inBlock && !this.prologueHasContent) return;
    if (this.lineStart < this.len) {
      const done = this.examineLine(this.lineStart, this.len);
      if (done !== null) this.pending.push(done);
      this.lineStart = this.len;
    }
    if (this.inTextField && this.inBlock) {
      // Rare (a damaged file): redo the tail on the decoded text with the string splitter's rule.
      const text = decodeBytes(this.buf, this.segStart, this.len);
      const cut = swallowedBlockStart(text);
      if (cut !== null) {
        this.pending.push({ name: this.name, line: this.line, text: text.slice(0, cut.offset), beforeFirstBlock: false });
        const rest = new CifBlockSplitter(this.line + cut.lines);
        rest.push(text.slice(cut.offset), this.pending);
        rest.end(this.pending);
        this.done();
        return;
      }
    }
    const last = this.finish(this.len);
    if (last !== null) this.pending.push(last);
    this.done();
  }

  /** Nothing is left to emit. */
  private done(): void {
    this.segStart = this.lineStart = this.len;
    this.inBlock = false;
    this.prologueHasContent = false;
  }

  /**
   * Look at the line [pos, end): toggle text-field state on a leading `;`, start a new block on `data_`
   * (after blanks). Same rule as CifBlockSplitter.examineLine. Returns the block the line ends, if any.
   */
  private examineLine(pos: number, end: number): RawBlock | null {
    const buf = this.buf;
    const c = buf[pos]!;
    if (c === 59) {
      this.inTextField = !this.inTextField;
      if (!this.inBlock) this.prologueHasContent = true;
      return null;
    }
    if (this.inTextField) return null;
    let k = pos;
    while (k < end && (buf[k] === 32 || buf[k] === 9)) k++;
    const d = k < end ? buf[k]! : -1;
    if (
      (d === 100 || d === 68) &&
      k + 4 < end &&
      (buf[k + 1]! | 32) === 97 &&
      (buf[k + 2]! | 32) === 116 &&
      (buf[k + 3]! | 32) === 97 &&
      buf[k + 4] === 95
    ) {
      const done = this.finish(pos);
      this.segStart = pos;
      let j = k + 5;
      while (j < end && !isSpace(buf[j]!)) j++;
      this.name = buf.toString('utf8', k + 5, j);
      this.line = this.lineNo;
      this.inBlock = true;
      this.blockCount++;
      return done;
    }
    if (!this.inBlock && !this.prologueHasContent && k < end && d !== 35 && d !== 10 && d !== 13) {
      this.prologueHasContent = true;
    }
    return null;
  }

  /** The current block (bytes [segStart, to)) or a prologue with content, decoded; null for neither. */
  private finish(to: number): RawBlock | null {
    if (this.inBlock) return { name: this.name, line: this.line, text: decodeBytes(this.buf, this.segStart, to), beforeFirstBlock: false };
    let done: RawBlock | null = null;
    if (this.prologueHasContent) {
      this.keepPrologue(to);
      const bytes = this.prologueParts.length === 1 ? this.prologueParts[0]! : Buffer.concat(this.prologueParts);
      done = { name: '', line: 1, text: decodeBytes(bytes, 0, bytes.length).slice(0, MAX_PROLOGUE_CHARS), beforeFirstBlock: true };
      this.prologueHasContent = false;
    }
    this.prologueParts = [];
    this.prologueBytes = 0;
    return done;
  }

  /** Move prologue bytes [segStart, to) out of buf, keeping at most MAX_PROLOGUE_BYTES in all. */
  private keepPrologue(to: number): void {
    const take = Math.min(to - this.segStart, MAX_PROLOGUE_BYTES - this.prologueBytes);
    if (take > 0) {
      this.prologueParts.push(Buffer.from(this.buf.subarray(this.segStart, this.segStart + take)));
      this.prologueBytes += take;
    }
    this.segStart = to;
  }

  /** Make room for `extra` more bytes: drop what is emitted, then grow only if the kept bytes need it. */
  private makeRoom(extra: number): void {
    if (!this.inBlock) this.keepPrologue(this.lineStart);
    const keepFrom = this.segStart;
    const kept = this.len - keepFrom;
    if (keepFrom > 0 && this.len + extra > this.buf.length) {
      this.buf.copyWithin(0, keepFrom, this.len);
      this.len = kept;
      this.segStart = 0;
      this.lineStart -= keepFrom;
    }
    if (this.len + extra > this.buf.length) {
      const grown = Buffer.allocUnsafe(Math.max(2 * this.buf.length, this.len + extra));
      this.buf.copy(grown, 0, 0, this.len);
      this.buf = grown;
    }
  }
}

/** Decode bytes [from, to) once: Latin-1 copy when all are ASCII (same result, no UTF-8 work), else UTF-8. */
function decodeBytes(buf: Buffer, from: number, to: number): string {
  return buf.toString(isAscii(buf.subarray(from, to)) ? 'latin1' : 'utf8', from, to);
}
