// Inputs: files, folders searched recursively, .cif.gz read directly (gzip, RFC 1952), file-level failures as
// one rejection with block "", blocks streamed in input order. Expected values are the blocks written here.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { expandInputs, readCifFile, readStructures } from '../src/io/read.js';
import type { BlockResult } from '../src/types.js';

function block(name: string, energy: number): string {
  return `data_${name}
_cell_length_a 5.0
_cell_length_b 6.0
_cell_length_c 7.0
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
_pred_energy ${energy}
loop_
_atom_site_label
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
C1 0.1 0.2 0.3
`;
}

let dir = '';
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'polysift-read-'));
  mkdirSync(join(dir, 'set', 'sub', 'deeper'), { recursive: true });
  writeFileSync(join(dir, 'set', 'b.cif'), block('b1', -1) + block('b2', -2));
  writeFileSync(join(dir, 'set', 'a.CIF'), block('a1', -3));
  writeFileSync(join(dir, 'set', 'notes.txt'), 'not a CIF');
  writeFileSync(join(dir, 'set', 'sub', 'c.cif.gz'), gzipSync(block('c1', -4) + block('c2', -5)));
  writeFileSync(join(dir, 'set', 'sub', 'deeper', 'd.cif'), block('d1', -6));
  writeFileSync(join(dir, 'empty.cif'), '');
  writeFileSync(join(dir, 'bom.cif'), '\uFEFF' + block('m1', 0));
  writeFileSync(join(dir, 'binary.cif'), Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x00, 0x01, 0x02, 0x03, 0x00]));
  writeFileSync(join(dir, 'plain.cif.gz'), block('p1', 0));
  let many = '';
  for (let i = 0; i < 3000; i++) many += block(`t${i}`, i);
  const gz = gzipSync(many);
  writeFileSync(join(dir, 'cut.cif.gz'), gz.subarray(0, Math.floor(gz.length * 0.6)));
  // More than one 1 MiB read chunk of ASCII, then UTF-8 text: the decoder must take over mid-file.
  writeFileSync(join(dir, 'utf8.cif'), many.slice(0, 1_500_000).replace(/data_t\d+\n[^]*$/, '') + block('u1', 0).replace('_pred_energy 0', "_publ_author_name 'Müller, Zoë'"));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function collect(gen: AsyncGenerator<BlockResult>): Promise<BlockResult[]> {
  const out: BlockResult[] = [];
  for await (const r of gen) out.push(r);
  return out;
}

function ids(results: BlockResult[]): string[] {
  return results.map((r) => (r.kind === 'record' ? r.record.id : `rejected:${r.rejected.block}`));
}

describe('expandInputs', () => {
  it('searches folders recursively for .cif and .cif.gz in code-point order, files as given', async () => {
    const files = await expandInputs([join(dir, 'set'), join(dir, 'empty.cif')]);
    expect(files).toEqual([
      join(dir, 'set', 'a.CIF'),
      join(dir, 'set', 'b.cif'),
      join(dir, 'set', 'sub', 'c.cif.gz'),
      join(dir, 'set', 'sub', 'deeper', 'd.cif'),
      join(dir, 'empty.cif'),
    ]);
  });

  it('throws a one-line error for a missing path', async () => {
    await expect(expandInputs([join(dir, 'nope')])).rejects.toThrow(`input not found: ${join(dir, 'nope')}`);
  });
});

describe('readStructures', () => {
  it('reads UTF-8 text that follows a megabyte of ASCII', async () => {
    const r = await collect(readCifFile(join(dir, 'utf8.cif')));
    const last = r[r.length - 1]!;
    expect(last.kind === 'record' && last.record.id).toBe('u1');
    expect(last.kind === 'record' && last.record.text).toMatch(/'Müller, Zoë'/);
    expect(r.every((x) => x.kind === 'record')).toBe(true);
  });

  it('streams every block of every file in input order, gzip included, with the energy item', async () => {
    const results = await collect(readStructures([join(dir, 'set')], { energyItem: 'pred_energy' }));
    expect(ids(results)).toEqual(['a1', 'b1', 'b2', 'c1', 'c2', 'd1']);
    expect(results.map((r) => (r.kind === 'record' ? r.record.energy : null))).toEqual([-3, -1, -2, -4, -5, -6]);
    const c2 = results[4]!;
    expect(c2.kind === 'record' && c2.record.source).toBe(`${join(dir, 'set', 'sub', 'c.cif.gz')}#c2`);
    expect(c2.kind === 'record' && c2.record.line).toBe(15);
    expect(c2.kind === 'record' && c2.record.text).toBe(block('c2', -5));
  });

  it('reads a file that starts with a UTF-8 byte-order mark', async () => {
    const r = await collect(readCifFile(join(dir, 'bom.cif')));
    expect(ids(r)).toEqual(['m1']);
  });

  it('turns an empty file into one rejection with block ""', async () => {
    const r = await collect(readCifFile(join(dir, 'empty.cif')));
    expect(ids(r)).toEqual(['rejected:']);
    expect(r[0]!.kind === 'rejected' && r[0]!.rejected.reason).toMatch(/empty/);
  });

  it('turns a binary file into one rejection with block ""', async () => {
    const r = await collect(readCifFile(join(dir, 'binary.cif')));
    expect(ids(r)).toEqual(['rejected:']);
    expect(r[0]!.kind === 'rejected' && r[0]!.rejected.reason).toMatch(/binary/);
  });

  it('rejects a .gz name that is not gzip', async () => {
    const r = await collect(readCifFile(join(dir, 'plain.cif.gz')));
    expect(ids(r)).toEqual(['rejected:']);
    expect(r[0]!.kind === 'rejected' && r[0]!.rejected.reason).toMatch(/not gzip-compressed/);
  });

  it('reads what it can of a cut gzip file and reports the damage', async () => {
    const r = await collect(readCifFile(join(dir, 'cut.cif.gz')));
    const last = r[r.length - 1]!;
    expect(last.kind).toBe('rejected');
    expect(last.kind === 'rejected' && last.rejected.reason).toMatch(/gzip data is damaged or cut short/);
    // Blocks fully inside the intact part are read, in order, and the damage is named at the block it hit.
    expect(r.length).toBeGreaterThan(100);
    expect(r.length).toBeLessThan(3000);
    expect(ids(r.slice(0, -1))).toEqual(r.slice(0, -1).map((_, i) => `t${i}`));
    expect(last.kind === 'rejected' && last.rejected.block).toBe(`t${r.length - 1}`);
  });
});
