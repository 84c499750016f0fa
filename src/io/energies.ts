// Energies for a run: from a CSV file (read with papaparse) or from a numeric CIF data item, with the unit
// stated by the user. Every problem is kept, per row and per structure, so nothing is dropped silently:
// ids that match no structure, structures with no energy, repeated ids, values that are not numbers.
import Papa from 'papaparse';
import type { EnergyUnit } from '../landscape/schema.js';

/** kJ/mol per kcal/mol: the thermochemical calorie is 4.184 J exactly (NIST SP 811, 2008). */
export const KJ_PER_KCAL = 4.184;
/** kJ/mol per eV per molecule: e x N_A = 96.485 332 12 kJ/mol (CODATA 2018 recommended values). */
export const KJ_PER_EV = 96.48533212;

export const ENERGY_UNITS: readonly EnergyUnit[] = ['kJ/mol', 'kcal/mol', 'eV'];

/** Value in kJ/mol of one `unit`. */
export function kjPerMolOf(unit: EnergyUnit): number {
  return unit === 'kJ/mol' ? 1 : unit === 'kcal/mol' ? KJ_PER_KCAL : KJ_PER_EV;
}

/** Convert an energy between units (eV meaning eV per molecule). */
export function convertEnergy(value: number, from: EnergyUnit, to: EnergyUnit): number {
  if (from === to) return value;
  return (value * kjPerMolOf(from)) / kjPerMolOf(to);
}

/** Read a unit as a user types it (case-insensitive; "kj/mol", "kJ", "kcal", "ev"). Throws with the accepted spellings. */
export function parseEnergyUnit(text: string): EnergyUnit {
  const t = text.trim().toLowerCase().replace(/\s+/g, '');
  if (t === 'kj/mol' || t === 'kj' || t === 'kjmol') return 'kJ/mol';
  if (t === 'kcal/mol' || t === 'kcal' || t === 'kcalmol') return 'kcal/mol';
  if (t === 'ev') return 'eV';
  throw new Error(`unknown energy unit '${text}': use kJ/mol, kcal/mol or eV`);
}

/**
 * An amount of energy as typed on the command line, e.g. "10", "10kJ/mol", "2.4 kcal/mol", "0.1eV",
 * converted to `unit` (a bare number is taken in `unit`).
 */
export function parseEnergyAmount(text: string, unit: EnergyUnit): number {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z/]*)\s*$/.exec(text);
  if (!m) throw new Error(`'${text}' is not an energy: give a number, optionally with a unit (kJ/mol, kcal/mol, eV)`);
  const value = Number(m[1]);
  return m[2] === '' ? value : convertEnergy(value, parseEnergyUnit(m[2]), unit);
}

export interface EnergyIssue {
  /** 1-based line in the CSV (the header is line 1). */
  line: number;
  id: string;
  issue: string;
}

export interface EnergyTable {
  file: string;
  /** Energy per id, in the file's unit; ids with conflicting repeats are absent (see `conflicts`). */
  energies: Map<string, number>;
  /** Id -> lines where it appeared, for ids listed more than once. */
  repeats: Map<string, number[]>;
  /** Ids listed more than once with different values (given no energy; the user must choose). */
  conflicts: Set<string>;
  /** Rows that could not be used (non-numeric energy, empty id), and repeats. */
  issues: EnergyIssue[];
  /** First line of every id seen (usable or not). */
  lineOf: Map<string, number>;
  rows: number;
}

export interface EnergyCsvOptions {
  idColumn?: string;
  energyColumn?: string;
}

/**
 * Parse an energies CSV. Throws (one line, naming the file) when a required column is missing; other
 * problems are per row in `issues`. Columns are matched exactly first, then ignoring case and spaces.
 */
export function parseEnergyCsv(text: string, file: string, opts: EnergyCsvOptions = {}): EnergyTable {
  const idColumn = opts.idColumn ?? 'id';
  const energyColumn = opts.energyColumn ?? 'energy';
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false });
  const data = parsed.data;
  const table: EnergyTable = { file, energies: new Map(), repeats: new Map(), conflicts: new Set(), issues: [], lineOf: new Map(), rows: 0 };
  if (data.length === 0 || (data.length === 1 && data[0].every((c) => c.trim() === ''))) {
    throw new Error(`${file}: the energies file is empty; it needs a header line with columns '${idColumn}' and '${energyColumn}'`);
  }
  const header = data[0].map((h) => h.trim());
  const idAt = findColumn(header, idColumn);
  const energyAt = findColumn(header, energyColumn);
  const missing = [idAt < 0 ? idColumn : null, energyAt < 0 ? energyColumn : null].filter((x) => x !== null);
  if (missing.length > 0) {
    throw new Error(
      `${file}: no column ${missing.map((c) => `'${c}'`).join(' or ')} in the header (columns: ${header.map((h) => `'${h}'`).join(', ')}); ` +
        'name the columns with --id-column and --energy-column',
    );
  }
  const firstLine = new Map<string, number>();
  const valueOf = new Map<string, number>();
  for (let r = 1; r < data.length; r++) {
    const row = data[r];
    const line = r + 1;
    if (row.length === 1 && row[0].trim() === '') continue; // blank line
    table.rows++;
    const id = (row[idAt] ?? '').trim();
    const raw = (row[energyAt] ?? '').trim();
    if (id === '') {
      table.issues.push({ line, id: '', issue: `no id in column '${header[idAt]}'` });
      continue;
    }
    if (!table.lineOf.has(id)) table.lineOf.set(id, line);
    const value = DECIMAL.test(raw) ? Number(raw) : NaN;
    if (!Number.isFinite(value)) {
      table.issues.push({ line, id, issue: raw === '' ? `no energy for ${id}` : `energy '${clip(raw)}' is not a number` });
      continue;
    }
    const seen = firstLine.get(id);
    if (seen === undefined) {
      firstLine.set(id, line);
      valueOf.set(id, value);
      table.energies.set(id, value);
      continue;
    }
    const lines = table.repeats.get(id) ?? [seen];
    lines.push(line);
    table.repeats.set(id, lines);
    if (value !== valueOf.get(id)) {
      table.conflicts.add(id);
      table.energies.delete(id);
      table.issues.push({ line, id, issue: `id repeated (lines ${lines.join(', ')}) with different energies; none is used` });
    } else {
      table.issues.push({ line, id, issue: `id repeated (lines ${lines.join(', ')}) with the same energy` });
    }
  }
  return table;
}

/** A plain decimal number (no hex, no 'Infinity'). */
const DECIMAL = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;

function findColumn(header: string[], name: string): number {
  const exact = header.indexOf(name);
  if (exact >= 0) return exact;
  const norm = (s: string) => s.toLowerCase().replace(/[\s_-]+/g, '');
  return header.findIndex((h) => norm(h) === norm(name));
}

function clip(s: string): string {
  return s.length > 40 ? `${s.slice(0, 37)}...` : s;
}

export interface EnergyAssignment {
  /** Energy per structure (file's unit) or null. */
  energy: Array<number | null>;
  /** Per structure: why it has no energy (empty when it has one). */
  problem: string[];
  /** Ids in the CSV that match no structure, with their lines. */
  unmatched: EnergyIssue[];
}

/**
 * Match an energy table to the structures' ids. A structure whose id is absent, or listed with conflicting
 * values, gets null and a problem sentence; ids in the table that match no structure are returned.
 */
export function assignEnergies(ids: readonly string[], table: EnergyTable): EnergyAssignment {
  const energy: Array<number | null> = [];
  const problem: string[] = [];
  const badRows = new Map<string, EnergyIssue>();
  for (const issue of table.issues) if (issue.id !== '' && !badRows.has(issue.id)) badRows.set(issue.id, issue);
  const present = new Set(ids);
  // An id shared by several input structures (the same block name in two files) cannot be told apart by the CSV.
  const uses = new Map<string, number>();
  for (const id of ids) uses.set(id, (uses.get(id) ?? 0) + 1);
  for (const id of ids) {
    const shared = uses.get(id)!;
    if (shared > 1 && table.lineOf.has(id)) {
      energy.push(null);
      problem.push(`no energy: the id is shared by ${shared} structures in the inputs, so ${table.file} cannot tell them apart`);
      continue;
    }
    const e = table.energies.get(id);
    if (e !== undefined) {
      energy.push(e);
      const rep = table.repeats.get(id);
      problem.push(rep ? `listed ${rep.length} times in ${table.file} (lines ${rep.join(', ')}) with the same energy` : '');
      continue;
    }
    energy.push(null);
    if (table.conflicts.has(id)) {
      problem.push(`no energy: listed ${table.repeats.get(id)!.length} times in ${table.file} (lines ${table.repeats.get(id)!.join(', ')}) with different energies`);
    } else if (badRows.has(id)) {
      const b = badRows.get(id)!;
      problem.push(`no energy: ${table.file} line ${b.line}: ${b.issue}`);
    } else problem.push(`no energy: id not found in ${table.file}`);
  }
  const unmatched: EnergyIssue[] = [];
  for (const [id, line] of table.lineOf) if (!present.has(id)) unmatched.push({ line, id, issue: 'id matches no structure in the inputs' });
  return { energy, problem, unmatched };
}

/** One summary line per kind of energy problem, for stderr. */
export function energySummary(table: EnergyTable | null, a: EnergyAssignment): string[] {
  const out: string[] = [];
  const missing = a.problem.filter((p) => p.startsWith('no energy')).length;
  if (missing > 0) out.push(`${missing} structure(s) have no energy (reason per row in structures.csv)`);
  const shared = a.problem.filter((p) => p.includes('is shared by')).length;
  if (shared > 0) out.push(`${shared} structure(s) share their id with another input structure; the energies file cannot tell them apart`);
  if (table) {
    if (a.unmatched.length > 0)
      out.push(`${a.unmatched.length} id(s) in ${table.file} match no structure: ${a.unmatched.slice(0, 5).map((u) => u.id).join(', ')}${a.unmatched.length > 5 ? ', ...' : ''}`);
    const nonNumeric = table.issues.filter((i) => i.issue.includes('not a number') || i.issue.startsWith('no energy for')).length;
    if (nonNumeric > 0) out.push(`${nonNumeric} row(s) of ${table.file} have no usable energy value`);
    if (table.repeats.size > 0) out.push(`${table.repeats.size} id(s) repeated in ${table.file} (${table.conflicts.size} with different energies, given none)`);
    const noId = table.issues.filter((i) => i.id === '').length;
    if (noId > 0) out.push(`${noId} row(s) of ${table.file} have no id`);
  }
  return out;
}
