// Energies for a run: from a CSV file (read with papaparse) or from a numeric CIF data item, with the unit
// stated by the user. Every problem is kept, per row and per structure, so nothing is dropped silently:
// ids that match no structure, structures with no energy, repeated ids, values that are not numbers.
import Papa from 'papaparse';
import { utf16Kind } from './text-encoding.js';
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

/** Column separators tried, in this order, on the header line: the first that shows both named columns is used. */
const DELIMITERS = [',', ';', '\t'] as const;

/**
 * Parse an energies CSV. Throws (one line, naming the file) when a required column is missing, or when not one
 * energy can be read from the file (showing the first bad value and what to change); other problems are per
 * row in `issues`. Columns are matched exactly first, then ignoring case and spaces. The separator is a comma,
 * a semicolon or a tab, whichever shows both columns in the header; in a file separated by semicolons or tabs
 * (what spreadsheets write in locales with a decimal comma) a decimal comma is read as a decimal point.
 */
export function parseEnergyCsv(text: string, file: string, opts: EnergyCsvOptions = {}): EnergyTable {
  const idColumn = opts.idColumn ?? 'id';
  const energyColumn = opts.energyColumn ?? 'energy';
  const body = text.replace(/^\uFEFF/, '');
  const table: EnergyTable = { file, energies: new Map(), repeats: new Map(), conflicts: new Set(), issues: [], lineOf: new Map(), rows: 0 };
  let data: string[][] = [];
  let header: string[] = [];
  let idAt = -1;
  let energyAt = -1;
  let delimiter: string = DELIMITERS[0];
  for (const d of DELIMITERS) {
    const parsed = Papa.parse<string[]>(body, { delimiter: d, skipEmptyLines: false }).data;
    const h = (parsed[0] ?? []).map((x) => x.trim());
    if (d === DELIMITERS[0]) {
      data = parsed;
      header = h;
    }
    if (findColumn(h, idColumn) >= 0 && findColumn(h, energyColumn) >= 0) {
      data = parsed;
      header = h;
      delimiter = d;
      break;
    }
  }
  if (data.length === 0 || (data.length === 1 && data[0].every((c) => c.trim() === ''))) {
    throw new Error(`${file}: the energies file is empty; it needs a header line with columns '${idColumn}' and '${energyColumn}'`);
  }
  idAt = findColumn(header, idColumn);
  energyAt = findColumn(header, energyColumn);
  const missing = [idAt < 0 ? idColumn : null, energyAt < 0 ? energyColumn : null].filter((x) => x !== null);
  if (missing.length > 0) {
    throw new Error(
      `${file}: no column ${missing.map((c) => `'${c}'`).join(' or ')} in the header (columns: ${header.map((h) => `'${h}'`).join(', ')}); ` +
        'name the columns with --id-column and --energy-column',
    );
  }
  const decimalComma = delimiter !== ',';
  const firstLine = new Map<string, number>();
  const valueOf = new Map<string, number>();
  let firstBad: { line: number; raw: string } | null = null;
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
    const value = readDecimal(raw, decimalComma);
    if (!Number.isFinite(value)) {
      if (!firstBad) firstBad = { line, raw };
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
  // Not one value could be read: sifting in input order would mislead, so stop with what to change.
  if (valueOf.size === 0) {
    const column = `column '${header[energyAt]}'`;
    if (table.rows === 0) throw new Error(`${file}: no energy could be read: the file has a header but no rows`);
    if (!firstBad) throw new Error(`${file}: no energy could be read: no row has an id in column '${header[idAt]}'; choose the id column with --id-column`);
    throw new Error(`${file}: no energy could be read: line ${firstBad.line} has ${firstBad.raw === '' ? 'nothing' : `'${clip(firstBad.raw)}'`} in ${column}; ${howToFix(firstBad.raw, delimiter)}`);
  }
  return table;
}

/** A plain decimal number (no hex, no 'Infinity'). */
const DECIMAL = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;
/** The same with a decimal comma. */
const DECIMAL_COMMA = /^[-+]?(?:\d+,?\d*|,\d+)(?:[eE][-+]?\d+)?$/;

/** The number in `raw`, or NaN; with `decimalComma` one comma may stand for the decimal point. */
export function readDecimal(raw: string, decimalComma: boolean): number {
  if (DECIMAL.test(raw)) return Number(raw);
  if (decimalComma && DECIMAL_COMMA.test(raw)) return Number(raw.replace(',', '.'));
  return NaN;
}

/** What to change when the energy column holds no number at all. */
function howToFix(raw: string, delimiter: string): string {
  const numberLike = /^[-+\u2212]?[\d.,\s\u00a0']+(?:[eE][-+]?\d+)?$/.test(raw) && /\d/.test(raw);
  if (numberLike && delimiter === ',' && /^[-+]?\d+,\d+$/.test(raw)) {
    return 'numbers with a decimal comma need a file separated by semicolons (or tabs): save it so, or write a decimal point';
  }
  if (numberLike) return 'write plain numbers such as -95.12 (no thousands separators, a minus sign from the keyboard, a decimal point or, in a file separated by semicolons or tabs, a decimal comma)';
  return 'the energy column must hold plain numbers such as -95.12; choose the column with --energy-column';
}

/**
 * The text of an energies file from its bytes: UTF-8 (a byte-order mark is dropped) or UTF-16, which some
 * spreadsheets write as "Unicode text" (recognised by its byte-order mark, or by zero bytes between ASCII
 * characters). `encoding` says which was read.
 */
export function decodeEnergyFile(bytes: Uint8Array): { text: string; encoding: 'UTF-8' | 'UTF-16LE' | 'UTF-16BE' } {
  const utf16 = utf16Kind(bytes);
  if (utf16) {
    const text = new TextDecoder(utf16 === 'UTF-16LE' ? 'utf-16le' : 'utf-16be').decode(bytes);
    return { text: text.replace(/^\uFEFF/, ''), encoding: utf16 };
  }
  return { text: new TextDecoder('utf-8').decode(bytes).replace(/^\uFEFF/, ''), encoding: 'UTF-8' };
}


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
 * `names` (optional, one per structure) are the block names: a structure whose id differs from its block name
 * (a name shared by several input blocks, src/landscape/unique-ids.ts) takes the energy listed under its id; a
 * row listing only the shared block name cannot tell those structures apart and gives them none.
 */
export function assignEnergies(ids: readonly string[], table: EnergyTable, names?: readonly string[]): EnergyAssignment {
  const energy: Array<number | null> = [];
  const problem: string[] = [];
  const badRows = new Map<string, EnergyIssue>();
  for (const issue of table.issues) if (issue.id !== '' && !badRows.has(issue.id)) badRows.set(issue.id, issue);
  const present = new Set(ids);
  const nameOf = (i: number) => names?.[i] ?? ids[i];
  // A name shared by several input structures (the same block name in two files) cannot be told apart by the CSV.
  const uses = new Map<string, number>();
  ids.forEach((_, i) => uses.set(nameOf(i), (uses.get(nameOf(i)) ?? 0) + 1));
  for (const n of uses.keys()) present.add(n);
  ids.forEach((id, i) => {
    const name = nameOf(i);
    const shared = uses.get(name)!;
    if (shared > 1 && table.lineOf.has(name) && (id === name || !table.lineOf.has(id))) {
      energy.push(null);
      const byId = id === name ? '' : ` (block name ${name}); list each one by its id (this one is ${id})`;
      problem.push(`no energy: the id is shared by ${shared} structures in the inputs, so ${table.file} cannot tell them apart${byId}`);
      return;
    }
    const e = table.energies.get(id);
    if (e !== undefined) {
      energy.push(e);
      const rep = table.repeats.get(id);
      problem.push(rep ? `listed ${rep.length} times in ${table.file} (lines ${rep.join(', ')}) with the same energy` : '');
      return;
    }
    energy.push(null);
    if (table.conflicts.has(id)) {
      problem.push(`no energy: listed ${table.repeats.get(id)!.length} times in ${table.file} (lines ${table.repeats.get(id)!.join(', ')}) with different energies`);
    } else if (badRows.has(id)) {
      const b = badRows.get(id)!;
      problem.push(`no energy: ${table.file} line ${b.line}: ${b.issue}`);
    } else problem.push(`no energy: id not found in ${table.file}`);
  });
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
