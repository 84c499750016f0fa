// The one convention every CSV table of polysift follows (structures, unique, convergence, notes, energy issues,
// diff-*, locate):
// - a column is declared once, as a name, a quantity and a function of the row (`Column`); adding a column is one
//   line in the table's column list (and one row in the README's table for that file);
// - the quantity decides the unit suffix of the header (lower-case snake_case: `_angstrom`, `_angstrom3`, `_deg`,
//   `_g_per_cm3`, and the run's energy unit `_kj_per_mol`, `_kcal_per_mol` or `_ev`; dimensionless columns have
//   none) and the decimals every value is rounded to, once, here;
// - numbers are written in their shortest form after that rounding ("2.09", not "2.090000"), so a CSV reader gets
//   numeric columns and no value carries more digits than its precision; a missing value is an empty cell.
import type { EnergyUnit } from '../landscape/schema.js';
import { csvLine } from './outputs.js';

/** What a column holds: decides its unit suffix and its rounding. */
export type Quantity =
  | 'text'
  /** Whole numbers (counts, ranks, lines, Z, family numbers). */
  | 'integer'
  /** Cell lengths, Å. */
  | 'length'
  /** EMD and other distances between structures, Å. */
  | 'distance'
  /** Cell angles, degrees. */
  | 'angle'
  /** Cell volume, Å³. */
  | 'volume'
  | 'density'
  /** Energies in the run's unit (per molecule). */
  | 'energy'
  /** Z' (molecules per asymmetric unit), dimensionless. */
  | 'z-prime'
  /** Uniform scale factors (a stretch of 1% is 1.01), dimensionless. */
  | 'scale'
  /** Ratios and correlations, dimensionless. */
  | 'ratio';

export interface Column<R> {
  /** Base name in lower-case snake_case; the unit suffix is appended from the quantity. */
  name: string;
  quantity: Quantity;
  value: (row: R) => string | number | null;
}

/**
 * Decimals per quantity, chosen for what each number can mean:
 * - cell lengths 4 (CIFs give cell lengths to 1e-4 Å or coarser), angles 3, volumes 2 (Å³);
 * - EMD 4 (1e-4 Å is ten times below the smallest optimiser noise the duplicate tolerance is set against);
 * - density 4 (g/cm³; close partners differ by 0.005 g/cm³ or less, see the README);
 * - energies to 1e-4 kJ/mol or better: 4 decimals in kJ/mol and kcal/mol, 6 in eV (1e-6 eV = 0.0001 kJ/mol);
 * - Z' 4 (1/48 = 0.0208), scale factors 5 (a 0.001% stretch), ratios and correlations 4.
 */
const DECIMALS: Record<Exclude<Quantity, 'text' | 'integer' | 'energy'>, number> = {
  length: 4,
  distance: 4,
  angle: 3,
  volume: 2,
  density: 4,
  'z-prime': 4,
  scale: 5,
  ratio: 4,
};

/** Decimals of energies by unit. */
const ENERGY_DECIMALS: Record<EnergyUnit, number> = { 'kJ/mol': 4, 'kcal/mol': 4, eV: 6 };

/** Header suffix of an energy unit. */
export const ENERGY_SUFFIX: Record<EnergyUnit, string> = { 'kJ/mol': '_kj_per_mol', 'kcal/mol': '_kcal_per_mol', eV: '_ev' };

const SUFFIX: Partial<Record<Quantity, string>> = {
  length: '_angstrom',
  distance: '_angstrom',
  angle: '_deg',
  volume: '_angstrom3',
  density: '_g_per_cm3',
};

/** The header of a column in a run with the given energy unit. */
export function columnHeader(c: { name: string; quantity: Quantity }, unit: EnergyUnit): string {
  if (c.quantity === 'energy') return c.name + ENERGY_SUFFIX[unit];
  return c.name + (SUFFIX[c.quantity] ?? '');
}

/** Decimals a quantity is written with (null for text and whole numbers). */
export function decimalsOf(q: Quantity, unit: EnergyUnit): number | null {
  if (q === 'text' || q === 'integer') return null;
  if (q === 'energy') return ENERGY_DECIMALS[unit];
  return DECIMALS[q];
}

/** A number rounded to `decimals` and written in its shortest form; -0 is written as 0. Refuses non-finite numbers. */
export function formatNumber(x: number, decimals: number): string {
  if (!Number.isFinite(x)) throw new Error(`cannot write the non-finite number ${x}`);
  const r = Number(x.toFixed(decimals));
  return r === 0 ? '0' : String(r);
}

/** One cell of a column: text as is, numbers rounded for their quantity, null as an empty cell. */
export function formatCell(q: Quantity, v: string | number | null, unit: EnergyUnit): string | number | null {
  if (v === null) return null;
  if (typeof v === 'string') return v;
  if (q === 'integer') {
    if (!Number.isInteger(v)) throw new Error(`a whole number was expected, got ${v}`);
    return v;
  }
  const d = decimalsOf(q, unit);
  return d === null ? String(v) : formatNumber(v, d);
}

/** The whole CSV text of a table: header line, one line per row, trailing newline. */
export function tableCsv<R>(columns: ReadonlyArray<Column<R>>, rows: Iterable<R>, unit: EnergyUnit): string {
  const lines = [csvLine(columns.map((c) => columnHeader(c, unit)))];
  for (const r of rows) lines.push(csvLine(columns.map((c) => formatCell(c.quantity, c.value(r), unit))));
  return `${lines.join('\n')}\n`;
}

/** Headers of a table for a unit (what the README documents, with `<unit>` for the energy suffix). */
export function tableHeaders<R>(columns: ReadonlyArray<Column<R>>, unit: EnergyUnit): string[] {
  return columns.map((c) => columnHeader(c, unit));
}
