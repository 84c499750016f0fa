// Splits a stream of CIF text into data blocks without holding the whole file: a block starts at a line whose
// first token is `data_...`, unless that line lies inside a semicolon text field (CIF 1.1: a text field opens
// and closes with a `;` in column 1, and a quoted string cannot span lines, so a per-line state is exact).
// Only whole lines are examined; a partial last line is carried to the next chunk.

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
