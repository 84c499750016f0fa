// Note codes (src/io/note-codes.ts): every note the reader, the geometry and the energy stages write on the real
// CIFs of test/data/real (sources in its README) belongs to a named kind, so structures.csv never falls back to the
// catch-all code; distinct texts of one kind are numbered in order of first appearance, the same for the same input.
import { describe, expect, it } from 'vitest';
import { sift } from '../src/landscape/sift.js';
import { assignNoteCodes, noteKind, notesCell } from '../src/io/note-codes.js';

describe('note codes', () => {
  it('name a kind for every note written on the real CIFs', async () => {
    const run = await sift({ inputs: ['test/data/real'], cacheDir: null, threads: 2, hydrogens: 'drop' });
    const texts = new Set(run.landscape.structures.flatMap((r) => r.notes));
    expect(texts.size).toBeGreaterThan(15);
    const unnamed = [...texts].filter((t) => noteKind(t) === 'note');
    expect(unnamed).toEqual([]);
    const kinds = new Set([...texts].map(noteKind));
    for (const k of ['hydrogens-dropped', 'disorder-group', 'special-positions', 'ops-from-symbol', 'density-stated']) expect(kinds).toContain(k);
  }, 120_000);

  it('number several texts of one kind in order of first appearance, and write each code once per row', () => {
    const a = 'no energy: id not found in e.csv';
    const b = 'no energy: e.csv line 4: energy \'x\' is not a number';
    const h = 'hydrogens dropped: 4 hydrogen site(s) left out (keep them with --hydrogens keep)';
    const codes = assignNoteCodes([[h], [b, h], [a], [a, a]]);
    expect(codes.entries).toEqual([
      { code: 'hydrogens-dropped', text: h, structures: 2 },
      { code: 'no-energy.1', text: b, structures: 1 },
      { code: 'no-energy.2', text: a, structures: 2 },
    ]);
    expect(notesCell([b, h], codes)).toBe('no-energy.1;hydrogens-dropped');
    expect(notesCell([a, a], codes)).toBe('no-energy.2');
    expect(noteKind('something no pattern knows')).toBe('note');
  });
});
