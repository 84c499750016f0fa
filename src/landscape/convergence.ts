// Convergence of a search: how many distinct low-energy structures had been found after each number
// of candidates, in input order, and whether that number was still rising over the last part of the run.
//
// Definitions (ours; the idea of plotting discoveries against effort is common practice):
// - A candidate is any input structure, whatever its status; `processed` counts candidates in input order.
// - A distinct structure is a duplicate group (one kept structure and its duplicates). It counts from the
//   first of its members met in input order, with the energy of its kept structure above the lowest.
// - "Still growing": at least one distinct structure within the lowest window was first met among the last
//   `tailFraction` (default 25%) of candidates.
import type { ConvergenceCurve, EnergyUnit, StructureRow } from './schema.js';
import { ENERGY_SUFFIX } from '../io/tables.js';

/** kJ/mol per kcal/mol (thermochemical calorie, 4.184 J exactly: NIST SP 811, 2008). */
const KJ_PER_KCAL = 4.184;
/** kJ/mol per eV per particle (e × N_A = 96.485 332 kJ/mol: CODATA 2018). */
const KJ_PER_EV = 96.48533212;

/** The usual examination windows above the global minimum, in kJ/mol (DESIGN.md: 10–20 kJ/mol; common practice). */
export const DEFAULT_WINDOWS_KJ_PER_MOL: readonly number[] = [5, 10, 20];

export interface ConvergenceOptions {
  /** Part of the run, at its end, in which a new low-energy structure means "still growing". Default 0.25. */
  tailFraction?: number;
  /** Unit of the windows and energies, used in the statement only. Default kJ/mol. */
  energyUnit?: EnergyUnit;
}

/** Convert an energy from kJ/mol into `unit` (eV meaning eV per molecule). */
export function fromKjPerMol(valueKjPerMol: number, unit: EnergyUnit): number {
  if (unit === 'kJ/mol') return valueKjPerMol;
  if (unit === 'kcal/mol') return valueKjPerMol / KJ_PER_KCAL;
  return valueKjPerMol / KJ_PER_EV;
}

/** The default windows (5, 10, 20 kJ/mol) expressed in `unit`, rounded to 4 significant digits for display. */
export function defaultWindows(unit: EnergyUnit): number[] {
  return DEFAULT_WINDOWS_KJ_PER_MOL.map((w) => Number(fromKjPerMol(w, unit).toPrecision(4)));
}

/**
 * The convergence curve of a sifted run, or null when no kept structure has an energy.
 * `structures` must be in input order (`structures[i].index === i`), as in `landscape.json`.
 * `windows` are energies above the lowest, in the unit of the structures' energies.
 *
 * Points are the exact corners of the step curve: (0, zeros), and around each change at candidate n the
 * point (n-1, before) and (n, after), and the last candidate; joining them with straight lines draws the
 * exact staircase, and there are at most 2 × (kept structures) + 2 of them.
 */
export function convergenceCurve(
  structures: StructureRow[],
  windows: number[],
  options: ConvergenceOptions = {},
): ConvergenceCurve | null {
  const tailFraction = options.tailFraction ?? 0.25;
  const unit = options.energyUnit ?? 'kJ/mol';
  if (!(tailFraction > 0 && tailFraction < 1)) throw new Error(`tailFraction must lie strictly between 0 and 1, got ${tailFraction}`);
  if (windows.length === 0) throw new Error('convergenceCurve needs at least one energy window');
  for (const w of windows) {
    if (!Number.isFinite(w) || w < 0) throw new Error(`energy windows must be finite and non-negative, got ${w}`);
  }
  const n = structures.length;
  for (let i = 0; i < n; i++) {
    if (structures[i].index !== i) {
      throw new Error(`structures must be in input order: position ${i} holds structure index ${structures[i].index}`);
    }
  }
  const sortedWindows = [...windows].sort((a, b) => a - b);
  const lowestWindow = sortedWindows[0];

  // Without any kept energy there is nothing to place in a window.
  let anyEnergy = false;
  for (const s of structures) {
    if (s.status === 'kept' && s.energyRel !== null) {
      anyEnergy = true;
      break;
    }
  }
  if (!anyEnergy) return null;

  const seenGroup = new Uint8Array(n);
  const counts = new Array<number>(sortedWindows.length).fill(0);
  const points: Array<{ processed: number; counts: number[] }> = [{ processed: 0, counts: counts.slice() }];
  // Tail: candidates numbered tailStart..n (1-based count of processed candidates).
  const tailStart = Math.floor(n * (1 - tailFraction)) + 1;
  let newInTail = 0;
  let lastNewLow = 0; // candidate number at which the last structure within the lowest window was first met
  let lowTotal = 0;

  for (let i = 0; i < n; i++) {
    const s = structures[i];
    const processed = i + 1;
    if ((s.status !== 'kept' && s.status !== 'duplicate') || s.keptIndex === null) continue;
    const g = s.keptIndex;
    if (g < 0 || g >= n) throw new Error(`structure ${s.id} (index ${i}) names kept structure ${g}, which does not exist`);
    if (seenGroup[g]) continue;
    seenGroup[g] = 1;
    const e = structures[g].energyRel;
    if (e === null || e > sortedWindows[sortedWindows.length - 1]) continue;
    // A group first met here: record the corner before and after the step.
    const last = points[points.length - 1];
    if (last.processed !== processed - 1) points.push({ processed: processed - 1, counts: counts.slice() });
    for (let w = 0; w < sortedWindows.length; w++) if (e <= sortedWindows[w]) counts[w]++;
    if (points[points.length - 1].processed === processed) points[points.length - 1].counts = counts.slice();
    else points.push({ processed, counts: counts.slice() });
    if (e <= lowestWindow) {
      lowTotal++;
      lastNewLow = processed;
      if (processed >= tailStart) newInTail++;
    }
  }
  if (points[points.length - 1].processed !== n) points.push({ processed: n, counts: counts.slice() });

  const stillGrowing = newInTail > 0;
  const tailCount = n - tailStart + 1;
  const pct = Math.round(tailFraction * 100);
  const win = `${fmt(lowestWindow)} ${unit}`;
  let statement: string;
  if (stillGrowing) {
    statement =
      `Still growing: ${newInTail} of the ${lowTotal} distinct structures within ${win} of the lowest energy ` +
      `were first found in the last ${tailCount} of ${n} candidates (the last ${pct}%); ` +
      `more starting points would likely find more low-energy structures.`;
  } else if (lowTotal === 0) {
    statement = `No distinct structure lies within ${win} of the lowest energy, so growth in that window cannot be judged.`;
  } else {
    statement =
      `Not growing: no new distinct structure within ${win} of the lowest energy was found in the last ${tailCount} ` +
      `of ${n} candidates (the last ${pct}%); the last of the ${lowTotal} such structures was first found at candidate ` +
      `${lastNewLow}.`;
  }
  return { windows: sortedWindows, points, statement, stillGrowing };
}

/**
 * Column names of `convergence.csv`: `processed`, then one count column per window with the window and its unit in
 * the name (`within_5_kj_per_mol`), as every table names units (src/io/tables.ts).
 */
export function convergenceCsvHeader(windows: number[], unit: EnergyUnit): string[] {
  return ['processed', ...windows.map((w) => `within_${fmt(w)}${ENERGY_SUFFIX[unit]}`)];
}

/** The whole `convergence.csv` text (header line, one line per curve point, trailing newline); every value is a count. */
export function convergenceCsv(curve: ConvergenceCurve, unit: EnergyUnit): string {
  const lines = [convergenceCsvHeader(curve.windows, unit).join(',')];
  for (const p of curve.points) lines.push([p.processed, ...p.counts].join(','));
  return lines.join('\n') + '\n';
}

/** Shortest plain form of a window value for labels. */
function fmt(x: number): string {
  return String(Number(x.toPrecision(6)));
}
