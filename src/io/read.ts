// Inputs -> a stream of BlockResults: files as given, folders searched recursively for `*.cif` / `*.cif.gz`,
// gzip read directly (recognised by its magic bytes), multi-block files read block by block so that memory
// stays flat however large the file. File-level failures (missing, unreadable, empty, binary, not gzip)
// become one RejectedBlock with block "" so they still appear in every output.
import { createReadStream } from 'node:fs';
import { pipeline } from 'node:stream';
import { open, readdir, stat, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import { createGunzip } from 'node:zlib';
import type { Readable } from 'node:stream';
import type { BlockResult } from '../types.js';
import { CifBlockSplitter, CifByteSplitter, type RawBlock } from './cif-split.js';
import { blockResult, type ReadOptions } from './crystal-record.js';
import { utf16Kind } from './text-encoding.js';

export type { ReadOptions } from './crystal-record.js';

/** Bytes read per chunk from disk. */
const CHUNK_BYTES = 1 << 20;
/** Share of control characters in the first chunk above which a file is taken as binary. */
const BINARY_CONTROL_SHARE = 0.05;
/** Characters at the start of a file looked at for that share. */
const BINARY_HEAD_CHARS = 65536;

/**
 * Files as given; folders searched recursively for `*.cif` and `*.cif.gz` (case-insensitive), each folder's
 * files sorted by name (code-point order) so that runs are repeatable. A missing path throws a one-line error.
 */
export async function expandInputs(paths: string[]): Promise<string[]> {
  const out: string[] = [];
  for (const p of paths) {
    let st;
    try {
      st = await stat(p);
    } catch {
      throw new Error(`input not found: ${p}`);
    }
    if (st.isDirectory()) await walk(p, out);
    else out.push(p);
  }
  return out;
}

async function walk(dir: string, out: string[]): Promise<void> {
  const entries = await readdir(dir, { withFileTypes: true });
  const names = entries.map((e) => e.name).sort(codePointOrder);
  const byName = new Map(entries.map((e) => [e.name, e]));
  for (const name of names) {
    const e = byName.get(name)!;
    const full = join(dir, name);
    if (e.isDirectory()) await walk(full, out);
    else if (isCifName(name) && (e.isFile() || e.isSymbolicLink())) out.push(full);
  }
}

function isCifName(name: string): boolean {
  const l = name.toLowerCase();
  return l.endsWith('.cif') || l.endsWith('.cif.gz');
}

function codePointOrder(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Every block of every input, in input order, one BlockResult each. */
export async function* readStructures(paths: string[], opts: ReadOptions = {}): AsyncGenerator<BlockResult> {
  const files = await expandInputs(paths);
  for (const file of files) yield* readCifFile(file, opts);
}

/** Every block of one file (plain or gzip), streamed. Never throws for bad content. */
export async function* readCifFile(file: string, opts: ReadOptions = {}): AsyncGenerator<BlockResult> {
  // Look at the first bytes: empty, gzip or not.
  let fh: FileHandle;
  let head: Buffer;
  try {
    fh = await open(file, 'r');
  } catch (e) {
    yield fileRejected(file, `cannot be read: ${(e as Error).message}`);
    return;
  }
  try {
    try {
      const buf = Buffer.alloc(2);
      const { bytesRead } = await fh.read(buf, 0, 2, 0);
      head = buf.subarray(0, bytesRead);
    } catch (e) {
      yield fileRejected(file, `cannot be read: ${(e as Error).message}`);
      return;
    }
    if (head.length === 0) {
      yield fileRejected(file, 'the file is empty');
      return;
    }
    const gzip = head.length === 2 && head[0] === 0x1f && head[1] === 0x8b;
    if (!gzip && file.toLowerCase().endsWith('.gz')) {
      yield fileRejected(file, 'the name ends in .gz but the file is not gzip-compressed; rename it or compress it');
      return;
    }
    if (!gzip) {
      // Plain text: large reads into one reused buffer (the splitter copies what it keeps).
      yield* streamBlocks(file, fileChunks(fh), false, opts);
      return;
    }
    const fileStream = createReadStream(file, { highWaterMark: CHUNK_BYTES });
    // pipeline() passes a read error of the file on to the gunzip stream, so the loop below sees it.
    const source: Readable = pipeline(fileStream, createGunzip(), () => {});
    try {
      yield* streamBlocks(file, source as AsyncIterable<Buffer>, true, opts);
    } finally {
      // Also when the caller stops early: close the file and the gunzip stream.
      fileStream.destroy();
      source.destroy();
    }
  } finally {
    await fh.close();
  }
}

/** The bytes of an open file from its start, in CHUNK_BYTES reads into one buffer reused for every read. */
async function* fileChunks(fh: FileHandle): AsyncGenerator<Uint8Array> {
  const buf = Buffer.allocUnsafe(CHUNK_BYTES);
  let position = 0;
  for (;;) {
    const { bytesRead } = await fh.read(buf, 0, buf.length, position);
    if (bytesRead === 0) return;
    position += bytesRead;
    yield buf.subarray(0, bytesRead);
  }
}

/**
 * Split the bytes of a stream into blocks (on bytes, before decoding; see CifByteSplitter), decode each block
 * once and read it.
 */
async function* streamBlocks(file: string, source: AsyncIterable<Uint8Array>, gzip: boolean, opts: ReadOptions): AsyncGenerator<BlockResult> {
  const splitter = new CifByteSplitter();
  let first = true;
  let emitted = 0;
  try {
    for await (const chunk of source) {
      let bytes = chunk;
      if (first) {
        // A byte-order mark (as some Windows editors write) would hide the first data_ line.
        if (bytes.length >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) bytes = bytes.subarray(3);
        // UTF-16 text (Windows editors' "Unicode") is not binary data; say what it is and how to convert it.
        const utf16 = utf16Kind(bytes);
        if (utf16) {
          yield fileRejected(file, `the file is ${utf16} text; polysift reads CIF files as UTF-8 (or ASCII): save it as UTF-8, e.g. iconv -f UTF-16 -t UTF-8`);
          return;
        }
        const headText = Buffer.from(bytes.buffer, bytes.byteOffset, Math.min(bytes.length, 4 * BINARY_HEAD_CHARS)).toString('utf8');
        if (binaryAt(headText.slice(0, BINARY_HEAD_CHARS), true)) {
          yield fileRejected(file, `binary data (not CIF text) near line ${splitter.linesRead}; the rest of the file is not read`);
          return;
        }
      }
      // A NUL byte anywhere: UTF-8 text holds a NUL byte only for the NUL character, which CIF never has.
      if (bytes.indexOf(0) >= 0) {
        yield fileRejected(file, `binary data (not CIF text) near line ${splitter.linesRead}; the rest of the file is not read`);
        return;
      }
      first = false;
      splitter.write(bytes);
      // One block decoded and read at a time, so little survives a young-generation collection.
      for (let raw = splitter.next(); raw !== null; raw = splitter.next()) {
        emitted++;
        yield blockResult(raw, file, opts);
      }
    }
  } catch (e) {
    const cur = splitter.current;
    const what = gzip ? 'the gzip data is damaged or cut short' : 'reading failed';
    yield {
      kind: 'rejected',
      rejected: {
        id: cur?.name ?? '',
        file,
        block: cur?.name ?? '',
        source: `${file}#${cur?.name ?? ''}`,
        line: cur?.line ?? splitter.linesRead,
        reason: `${what} near line ${splitter.linesRead} (${(e as Error).message}); blocks before this one were read, the rest of the file was not`,
        text: '',
      },
    };
    return;
  }
  splitter.close();
  for (let raw = splitter.next(); raw !== null; raw = splitter.next()) {
    emitted++;
    yield blockResult(raw, file, opts);
  }
  if (emitted === 0) yield fileRejected(file, 'the file holds no data_ block (only white space or comments)');
}

/** All blocks of a CIF text held in memory (tests, small inputs). Never throws for bad content. */
export function readCifText(text: string, file: string, opts: ReadOptions = {}): BlockResult[] {
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  if (text.length === 0) return [fileRejected(file, 'the file is empty')];
  if (binaryAt(text, true)) return [fileRejected(file, 'binary data (not CIF text); the file is not read')];
  const splitter = new CifBlockSplitter();
  const out: RawBlock[] = [];
  splitter.push(text, out);
  splitter.end(out);
  if (out.length === 0) return [fileRejected(file, 'the file holds no data_ block (only white space or comments)')];
  return out.map((raw) => blockResult(raw, file, opts));
}

/**
 * True when text looks binary: any NUL character, or (in the first chunk) many control characters or
 * undecodable bytes. CIF 1.1 text is printable ASCII plus tab, CR, LF (IUCr CIF 1.1 syntax, character set).
 */
function binaryAt(text: string, firstChunk: boolean): boolean {
  if (text.indexOf('\u0000') >= 0) return true;
  if (!firstChunk) return false;
  const n = Math.min(text.length, BINARY_HEAD_CHARS);
  let bad = 0;
  for (let i = 0; i < n; i++) {
    const c = text.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 12) || c === 0xfffd) bad++;
  }
  return n > 0 && bad > BINARY_CONTROL_SHARE * n;
}

function fileRejected(file: string, reason: string): BlockResult {
  return { kind: 'rejected', rejected: { id: '', file, block: '', source: `${file}#`, line: 1, reason, text: '' } };
}
