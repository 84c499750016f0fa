// Convergence of a search: how many distinct low-energy structures had been found after each number
// of candidates, in input order, and whether that number was still rising over the last part of the run.
//
// Definitions (ours; the idea of plotting discoveries against effort is common practice):
// - A candidate is any input structure, whatever its status; `processed` counts candidates in input order.
// - A distinct structure is a duplicate group (one kept structure and its duplicates). It counts from the
//   first of its members met in input order, with the energy of its kept structure above the lowest.
// - The verdict looks at the last `tailFraction` (default 25%) of candidates and at the distinct structures within
//   the lowest window (5 kJ/mol by default): how many of them were first met in that tail. A search finding new
//   low-energy structures at a steady rate would meet about 25% of them there; one that has stopped, none.
//     "growing"       the lowest-energy structure itself was first met in the tail, or at least MIN_NEW_GROWING of
//                     them and at least GROWING_SHARE (10%, i.e. 40% of the steady rate) were;
//     "levelled-off"  none was, or fewer than LEVELLED_SHARE (5%, a fifth of the steady rate);
//     "slowing"       in between (a few new ones, fewer than a steady search would find).
//   The minimum count keeps one or two late finds in a small window from reading as growth; the shares are
//   relative, so a 10,000-structure search with 1 new of 107 levels off while 27 new of 164 still grows. These
//   thresholds are ours (common practice only says that low-energy structures found repeatedly and no longer
//   new mark a converged search).
import type { ConvergenceCurve, ConvergenceVerdict, EnergyUnit, StructureRow } from './schema.js';
import { ENERGY_SUFFIX } from '../io/tables.js';

/** kJ/mol per kcal/mol (thermochemical calorie, 4.184 J exactly: NIST SP 811, 2008). */
const KJ_PER_KCAL = 4.184;
/** kJ/mol per eV per particle (e × N_A = 96.485 332 kJ/mol: CODATA 2018). */
const KJ_PER_EV = 96.48533212;

/** Fewest new low-energy structures in the tail that can make a search "growing". */
export const MIN_NEW_GROWING = 3;
/** Share of the low-energy structures first met in the tail at or above which (with MIN_NEW_GROWING) a search is growing. */
export const GROWING_SHARE = 0.1;
/** Share below which a search has levelled off. */
export const LEVELLED_SHARE = 0.05;

/** The verdict rule in one paragraph, for the report beside the curve (the tail fraction in percent). */
export function convergenceRuleText(tailPercent = 25): string {
  return (
    `The verdict looks at the last ${tailPercent}% of candidates: a search still finding low-energy structures at a steady ` +
    `rate would meet about ${tailPercent}% of them there, one that has stopped none. Still growing: the lowest-energy ` +
    `structure itself was first found there, or at least ${MIN_NEW_GROWING} and at least ${Math.round(GROWING_SHARE * 100)}% ` +
    `of the structures within the lowest window were; levelled off: none or under ${Math.round(LEVELLED_SHARE * 100)}%; ` +
    `slowing: in between.`
  );
}

/** The usual examination windows above the global minimum, in kJ/mol (DESIGN.md: 10–20 kJ/mol; common practice). */
export const DEFAULT_WINDOWS_KJ_PER_MOL: readonly number[] = [5, 10, 20];

export interface ConvergenceOptions {
  /** Part of the run, at its end, that the verdict looks at. Default 0.25. */
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
  // Candidate number at which the group holding the lowest energy was first met.
  let lowestAt = 0;
  let lowestE = Infinity;

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
    if (e < lowestE) {
      lowestE = e;
      lowestAt = processed;
    }
    if (e <= lowestWindow) {
      lowTotal++;
      lastNewLow = processed;
      if (processed >= tailStart) newInTail++;
    }
  }
  if (points[points.length - 1].processed !== n) points.push({ processed: n, counts: counts.slice() });

  const tailCount = n - tailStart + 1;
  const verdict = convergenceVerdict(newInTail, lowTotal, lowestAt >= tailStart);
  const statement = verdictStatement({
    verdict, newInTail, lowTotal, tailCount, n, tailFraction, lowestAt, lastNewLow, win: `${fmt(lowestWindow)} ${unit}`, lowestInTail: lowestAt >= tailStart,
  });
  const tail = { fraction: tailFraction, candidates: tailCount, withinLowest: lowTotal, newWithinLowest: newInTail, lowestFirstFoundAt: lowestAt > 0 ? lowestAt : null };
  return { windows: sortedWindows, points, statement, stillGrowing: verdict === 'growing', verdict, tail };
}

/**
 * The verdict rule (see the file header): `newInTail` of the `lowTotal` distinct structures within the lowest
 * window were first met in the tail; `lowestInTail` says whether the lowest-energy structure was.
 */
export function convergenceVerdict(newInTail: number, lowTotal: number, lowestInTail: boolean): ConvergenceVerdict {
  if (lowestInTail) return 'growing';
  if (lowTotal === 0 || newInTail === 0) return 'levelled-off';
  const share = newInTail / lowTotal;
  if (newInTail >= MIN_NEW_GROWING && share >= GROWING_SHARE) return 'growing';
  if (share < LEVELLED_SHARE) return 'levelled-off';
  return 'slowing';
}

function verdictStatement(v: {
  verdict: ConvergenceVerdict;
  newInTail: number;
  lowTotal: number;
  tailCount: number;
  n: number;
  tailFraction: number;
  lowestAt: number;
  lastNewLow: number;
  win: string;
  lowestInTail: boolean;
}): string {
  const pct = Math.round(v.tailFraction * 100);
  const tail = `the last ${count(v.tailCount)} of ${count(v.n)} candidates (the last ${pct}%)`;
  if (v.lowTotal === 0) return `No distinct structure lies within ${v.win} of the lowest energy, so growth in that window cannot be judged.`;
  const found =
    v.newInTail === 0
      ? `none of the ${v.lowTotal} distinct structures within ${v.win} of the lowest energy was first found in ${tail}`
      : `${v.newInTail} of the ${v.lowTotal} distinct structures within ${v.win} of the lowest energy ` +
        `${v.newInTail === 1 ? 'was' : 'were'} first found in ${tail}, ${Math.round((100 * v.newInTail) / v.lowTotal)}% of them ` +
        `where a search still finding them at a steady rate would give about ${pct}%`;
  if (v.verdict === 'growing') {
    if (v.lowestInTail) {
      return `Still growing: the lowest-energy structure itself was first found at candidate ${count(v.lowestAt)}, in ${tail}; ` +
        `${found}. More starts are likely to change the low-energy end of the landscape.`;
    }
    return `Still growing: ${found}. More starts are likely to find more low-energy structures.`;
  }
  if (v.verdict === 'slowing') {
    return `Slowing: ${found}. New low-energy structures are getting rarer, but the search has not levelled off; more starts may still add some.`;
  }
  const last = v.newInTail === 0 ? ` The last of them was first found at candidate ${count(v.lastNewLow)}.` : '';
  return `Levelled off: ${found}.${last} More starts of the same kind would likely add few low-energy structures ` +
    `(this says nothing about space groups, Z' or conformers the search did not try).`;
}

/** A whole number with thousands separators (10,000). */
function count(x: number): string {
  return x.toLocaleString('en-US');
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
