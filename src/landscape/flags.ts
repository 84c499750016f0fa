// What sift flags for a closer look, as short codes on each row (`flags` in structures.csv and landscape.json;
// the README says what each means and what to do about it), and the thresholds behind them. Flags never change
// which structures are kept: nothing is merged or split silently.
import { convertEnergy } from '../io/energies.js';
import type { EnergyUnit } from './schema.js';

export const FLAG_CODES = {
  /** The nearest other structure within the tolerance has another chemistry (composition, or elements at the same places). */
  otherChemistry: 'other-chemistry',
  /** Energy far from its duplicate group's median: an optimiser or convergence fault, or a tolerance too loose. */
  energyMismatch: 'energy-mismatch',
  /** A kept structure that looks like one minimum with another kept one on a flat energy surface. */
  flatMinimum: 'flat-minimum',
} as const;

/** One line per code, for summaries and the report. */
export const FLAG_MEANINGS: Record<string, string> = {
  [FLAG_CODES.otherChemistry]: 'a structure of other chemistry lies within the duplicate tolerance (same geometry, other elements): check the data and the atom assignment',
  [FLAG_CODES.energyMismatch]: 'energy far from the median of its duplicate group: check the optimisation of this copy, or the tolerance',
  [FLAG_CODES.flatMinimum]: 'kept beside another kept structure just beyond the tolerance with the same energy and density: likely one minimum on a flat energy surface',
};

/**
 * Default energy mismatch, kJ/mol. The same minimum relaxed twice agrees to well under 1 kJ/mol (common
 * practice). Measured (`npm run bench sift-flags`): in the demo's relaxed search every duplicate has exactly its
 * kept structure's energy (to the 4 decimals written); in the generated landscapes (0.02 kJ/mol energy noise
 * per copy) no copy lies more than 0.08 kJ/mol from its group's median. 1 kJ/mol is twelve times that, and half
 * the smallest fault planted in the tests (2 kJ/mol).
 */
export const DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL = 1;

/**
 * Flat-minimum thresholds. Measured (`npm run bench sift-flags`): the demo's three P21 structures at one
 * minimum agree to 0.0001 kJ/mol and 0.00004 g/cm3 at EMD 0.044-0.093 Å, and no other kept pair lies within
 * 0.12 Å. Among the demo's 17,000 pairs of distinct kept structures two agree as closely by chance (0.0001 kJ/mol
 * and 0.0009 g/cm3 at 0.24 Å; 0.0018 and 0.0007 at 0.29 Å), which the EMD window keeps out. The generated close
 * partners (distinct minima turned by 1-4 degrees, 0.055-0.17 Å apart) differ by at least 0.036 kJ/mol between
 * kept structures where they lie within 0.12 Å; density cannot tell them apart (same cell volume by
 * construction), energy can.
 */
export const DEFAULT_FLAT_ENERGY_KJ_PER_MOL = 0.01;
export const DEFAULT_FLAT_DENSITY_G_PER_CM3 = 0.002;
/**
 * Flat-minimum pairs lie beyond the tolerance but within FLAT_WINDOW_FACTOR times it, and never less than
 * FLAT_WINDOW_MIN_ANGSTROM: the demo's flat minimum spans 0.044-0.093 Å whatever tolerance is chosen (auto picks
 * 0.018 Å there). The window keeps coincidences out: the demo's distinct kept pairs that agree in energy and
 * density as closely lie 0.24 and 0.29 Å apart.
 */
export const FLAT_WINDOW_FACTOR = 3;
export const FLAT_WINDOW_MIN_ANGSTROM = 0.12;

/** Upper end (Å) of the flat-minimum window for a duplicate tolerance. */
export function flatWindowAngstrom(toleranceAngstrom: number): number {
  return Math.max(FLAT_WINDOW_FACTOR * toleranceAngstrom, FLAT_WINDOW_MIN_ANGSTROM);
}

/** A default energy threshold given in kJ/mol, in the run's unit. */
export function inUnit(kjPerMol: number, unit: EnergyUnit): number {
  return convertEnergy(kjPerMol, 'kJ/mol', unit);
}

/**
 * Whether two kept structures look like one minimum on a flat energy surface: EMD beyond the tolerance but
 * within the flat-minimum window (flatWindowAngstrom), energies within `flatEnergy` and densities within `flatDensity`.
 */
export function isFlatPair(
  emdAngstrom: number,
  energyA: number | null,
  energyB: number | null,
  densityA: number | null,
  densityB: number | null,
  t: { toleranceAngstrom: number; flatEnergy: number; flatDensityGPerCm3: number },
): boolean {
  if (energyA === null || energyB === null || densityA === null || densityB === null) return false;
  return (
    emdAngstrom > t.toleranceAngstrom &&
    emdAngstrom <= flatWindowAngstrom(t.toleranceAngstrom) &&
    Math.abs(energyA - energyB) <= t.flatEnergy &&
    Math.abs(densityA - densityB) <= t.flatDensityGPerCm3
  );
}
