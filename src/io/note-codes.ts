// Short codes for the notes attached to structures, so a CSV row says `disorder-group;hydrogens-dropped` instead of
// repeating the same sentences on hundreds of rows. Each distinct note text of a run gets one code: the code of its
// kind (NOTE_KINDS, first pattern that matches), numbered `kind.1`, `kind.2`, ... in order of first appearance when
// one kind has several texts in the run (their numbers or names differ). `notes.csv` lists every code once with
// its full text and how many structures carry it; landscape.json keeps the full texts per structure.
//
// To add a kind of note: add one line to NOTE_KINDS (before any broader pattern that would also match it) and one
// row to the README's list of note codes.

export interface NoteKind {
  code: string;
  /** Matches the note texts of this kind. */
  pattern: RegExp;
}

/** Kinds of notes, most specific first. A text no pattern matches gets the code `note`. */
export const NOTE_KINDS: readonly NoteKind[] = [
  // Reading the block (src/io/crystal-record.ts, src/geometry/elements.ts).
  { code: 'cell-volume-stated', pattern: /^stated _cell_volume/ },
  { code: 'ops-from-symbol', pattern: /^no operations are listed: the \d+ operations were built/ },
  { code: 'p1-assumed', pattern: /^no symmetry operations and no space-group symbol/ },
  { code: 'ops-joined', pattern: /^operations written with spaces/ },
  { code: 'ops-setting', pattern: /listed operations are not the (default )?setting/ },
  // Space-group settings read from symbols and numbers (src/io/declared-space-group.ts, src/geometry/space-group-symbol.ts).
  { code: 'setting-decided', pattern: /(does not say which of \d+ settings is meant|\(the H lattice letter names hexagonal axes\))/ },
  { code: 'setting-cell', pattern: /(is on (rhombohedral|hexagonal) axes but the cell|has unique axis \w but the cell)/ },
  {
    code: 'symbol-conflict',
    pattern: /(name different settings|names no setting this reader knows|cannot be read; the|is not one of 1\.\.230|does not match the .* symbol|is not a setting code this reader knows|does not fit .*; it was ignored)/,
  },
  { code: 'ops-not-group', pattern: /listed symmetry operations do not form a group/ },
  { code: 'element-read', pattern: /^(type symbol|label) '/ },
  { code: 'occupancy-above-1', pattern: /^site .* has occupancy .* > 1$/ },
  { code: 'dummy-sites', pattern: /^dummy sites/ },
  { code: 'hydrogen-unplaced', pattern: /^hydrogen sites with '\?' coordinates/ },
  { code: 'partial-occupancy', pattern: /site\(s\) with partial occupancy$/ },
  // Disorder policy and periodic set (src/geometry/disorder.ts, periodic-set.ts).
  { code: 'partial-no-group', pattern: /occupancy below 1 and no disorder group/ },
  { code: 'disorder-special', pattern: /^disorder group\(s\) .* about a special position/ },
  { code: 'disorder-group', pattern: /^disorder( assembly [^:]*)?: / },
  { code: 'special-positions', pattern: /site\(s\) on special positions/ },
  { code: 'sites-merged', pattern: /(coincide with earlier sites|is a symmetry copy of site|share one position)/ },
  { code: 'hydrogens-dropped', pattern: /^hydrogens dropped/ },
  // Crystal facts (src/geometry/facts.ts, molecules.ts, src/landscape/blocks-job.ts).
  { code: 'no-radius', pattern: /^no covalent radius/ },
  { code: 'extended', pattern: /^(bonds extend through|\d+ bonded component)/ },
  { code: 'overlap', pattern: /pair\(s\) of atoms closer than/ },
  { code: 'formula-hydrogen', pattern: /has hydrogen but no hydrogen sites are listed/ },
  { code: 'density-stated', pattern: /(^_exptl_crystal_density_diffrn says|^the sites give .* but _chemical_formula_sum)/ },
  { code: 'z-stated', pattern: /^_cell_formula_units_Z says/ },
  { code: 'composition', pattern: /which is not a whole multiple of _chemical_formula_sum/ },
  { code: 'no-facts', pattern: /^density and Z could not be computed/ },
  // Symmetry detection (src/geometry/crystal-symmetry.ts).
  { code: 'written-in', pattern: /^written in .*; .* within [\d.]+ Å/ },
  { code: 'symmetry-disorder', pattern: /^disordered sites: .* as declared is reported/ },
  { code: 'symmetry-no-hydrogen', pattern: /^hydrogen sites missing: .* as declared is reported/ },
  { code: 'symmetry-overlap', pattern: /^overlapping atoms: .* as declared is reported/ },
  { code: 'symmetry-failed', pattern: /^symmetry not detected within/ },
  { code: 'symmetry-ops-missed', pattern: /^the file's own \d+ operations are not all found within/ },
  // Repeated block names (src/landscape/unique-ids.ts).
  { code: 'shared-name', pattern: /^the block name .* is used by \d+ input blocks/ },
  // Energies (src/io/energies.ts, src/landscape/stages/energies.ts, energy-basis.ts, window.ts).
  { code: 'no-energy-window', pattern: /^no energy, so the energy window/ },
  { code: 'energy-per-cell', pattern: /^energy per cell/ },
  { code: 'no-energy', pattern: /^no energy/ },
  { code: 'energy-repeated', pattern: /^listed \d+ times in .* with the same energy/ },
];

/** Code of the kind a note text belongs to (`note` when no kind matches). */
export function noteKind(text: string): string {
  for (const k of NOTE_KINDS) if (k.pattern.test(text)) return k.code;
  return 'note';
}

export interface NoteCode {
  code: string;
  text: string;
  /** Structures carrying this note. */
  structures: number;
}

export interface NoteCodes {
  /** Every distinct note text with its code, in order of first appearance. */
  entries: NoteCode[];
  /** Code of a note text. */
  codeOf: Map<string, string>;
}

/** Codes for every distinct note text of a run, `notes[i]` being structure i's notes (deterministic for the same input). */
export function assignNoteCodes(notes: ReadonlyArray<readonly string[]>): NoteCodes {
  const textsOfKind = new Map<string, string[]>();
  const count = new Map<string, number>();
  for (const list of notes)
    for (const text of new Set(list)) {
      if (!count.has(text)) {
        const kind = noteKind(text);
        const texts = textsOfKind.get(kind) ?? [];
        texts.push(text);
        textsOfKind.set(kind, texts);
      }
      count.set(text, (count.get(text) ?? 0) + 1);
    }
  const codeOf = new Map<string, string>();
  for (const [kind, texts] of textsOfKind) texts.forEach((t, i) => codeOf.set(t, texts.length === 1 ? kind : `${kind}.${i + 1}`));
  const entries = [...count.keys()].map((text) => ({ code: codeOf.get(text)!, text, structures: count.get(text)! }));
  return { entries, codeOf };
}

/** The notes cell of a row: its codes, each once, joined by ';'. */
export function notesCell(list: readonly string[], codes: NoteCodes): string {
  return [...new Set(list.map((t) => codes.codeOf.get(t)!))].join(';');
}
