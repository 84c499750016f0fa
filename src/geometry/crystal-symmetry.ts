// The space group to report for a crystal: the one detected in its atoms (./detect-symmetry.ts) when that can be
// trusted, else the one its file declares, with a note either way where the two differ. Detection is not trusted
// (and the declared group is reported) for disordered structures (one ordered configuration is not the crystal's
// average structure), partial ones (hydrogen sites missing, atoms overlapping), when it fails, or when it does
// not find the file's own operations (a tolerance too tight for the file's coordinates).
import type { CrystalRecord, CrystalSymmetry, SymOp } from '../types.js';
import { conventionalPerGiven, detectSymmetry, type SymmetryCell, type SymmetryDetection } from './detect-symmetry.js';
import { defaultSetting, settingByOperations, type SpaceGroupSetting } from './space-group-table.js';
import { wrappedLength2 } from './matrix3.js';

/** Why detection is not applied to a structure (null when it is). */
export interface SymmetryDoubts {
  /** Partial occupancies or a disorder policy applied. */
  disordered: boolean;
  /** The formula has hydrogen but no hydrogen sites are listed. */
  missingHydrogens: boolean;
  /** Pairs of atoms closer than a bond can be. */
  overlaps: number;
}

export interface SymmetryResult {
  symmetry: CrystalSymmetry;
  /** The full detection, when it ran. */
  detection: SymmetryDetection | null;
}

/**
 * Report the symmetry of `record`, whose ordered atoms (hydrogens included) are `cell` with `moleculesPerCell`
 * molecules, within `toleranceAngstrom`.
 */
export function crystalSymmetry(
  record: CrystalRecord, cell: SymmetryCell, moleculesPerCell: number, doubts: SymmetryDoubts, toleranceAngstrom: number,
): SymmetryResult {
  const declared = declaredGroup(record);
  const nDeclared = Math.max(1, record.ops.length);
  const declaredZPrime = record.opsOrigin === 'identity' ? moleculesPerCell : moleculesPerCell / nDeclared;
  const fromFile = (note: string | null, detection: SymmetryDetection | null): SymmetryResult => ({
    symmetry: {
      source: 'declared',
      number: declared.setting?.number ?? null,
      symbol: declared.setting ? defaultSetting(declared.setting.number).short : declared.symbol,
      full: declared.setting ? defaultSetting(declared.setting.number).full : null,
      hall: declared.setting ? defaultSetting(declared.setting.number).hall : null,
      z: moleculesPerCell,
      zPrime: declaredZPrime,
      declared: declared.symbol,
      declaredNumber: declared.setting?.number ?? null,
      declaredZPrime,
      toleranceAngstrom,
      deviationAngstrom: null,
      operations: nDeclared,
      note,
    },
    detection,
  });
  const declaredText = declared.symbol ?? `the ${nDeclared} declared operations`;
  if (doubts.disordered) {
    return fromFile(`disordered sites: ${declaredText} as declared is reported (symmetry is detected only in ordered structures)`, null);
  }
  if (doubts.missingHydrogens) {
    return fromFile(`hydrogen sites missing: ${declaredText} as declared is reported (symmetry is detected only in complete structures)`, null);
  }
  if (doubts.overlaps > 0) {
    return fromFile(`overlapping atoms: ${declaredText} as declared is reported (symmetry is detected only without overlapping copies)`, null);
  }
  const detection = detectSymmetry(cell, toleranceAngstrom);
  if (!detection.ok) {
    return fromFile(`symmetry not detected within ${toleranceAngstrom} Å (${detection.reason}); ${declaredText} as declared is reported`, detection);
  }
  const d = detection.symmetry;
  if (!containsOperations(d.operations, record.ops, cell.basis, d.toleranceAngstrom)) {
    return fromFile(
      `the file's own ${nDeclared} operations are not all found within ${d.toleranceAngstrom} Å (its atoms sit further from their ` +
        `symmetric positions; a larger symmetry tolerance finds them); ${declaredText} as declared is reported`,
      detection,
    );
  }
  // Operations outside the table (another cell of a group) that are all of the detected ones name the same group.
  if (declared.setting === null && record.ops.length === d.operations.length) {
    declared.setting = defaultSetting(d.number);
    declared.symbol = declared.symbol ?? d.symbol;
  }
  const zPrime = moleculesPerCell / d.operations.length;
  const perGiven = conventionalPerGiven(d, cell.basis);
  const z = moleculesPerCell * perGiven;
  const notes: string[] = [];
  if (declared.setting?.number !== d.number) {
    notes.push(`written in ${declared.symbol ?? `${nDeclared} operations`}; ${d.symbol} within ${d.toleranceAngstrom} Å`);
  }
  const supercell = Math.round(1 / perGiven);
  if (supercell > 1 && Math.abs(supercell * perGiven - 1) < 1e-6) notes.push(`the given cell is a ${supercell}-fold supercell of the conventional cell`);
  return {
    symmetry: {
      source: 'detected',
      number: d.number,
      symbol: d.symbol,
      full: d.full,
      hall: d.hall,
      z: tidy(z),
      zPrime: tidy(zPrime),
      declared: declared.symbol,
      declaredNumber: declared.setting?.number ?? null,
      declaredZPrime,
      toleranceAngstrom: d.toleranceAngstrom,
      deviationAngstrom: d.deviationAngstrom,
      operations: d.operations.length,
      note: notes.length === 0 ? null : notes.join('; '),
    },
    detection,
  };
}

// Records built from one symbol share one operation list; naming it once is enough.
const declaredCache = new WeakMap<SymOp[], SpaceGroupSetting | null>();

/** The declared group in one spelling per setting, and its table entry when the table knows the operations. */
export function declaredGroup(record: CrystalRecord): { symbol: string | null; setting: SpaceGroupSetting | null } {
  if (record.opsOrigin === 'identity') return { symbol: 'P1', setting: defaultSetting(1) };
  let setting = declaredCache.get(record.ops);
  if (setting === undefined) {
    setting = settingByOperations(record.ops);
    declaredCache.set(record.ops, setting);
  }
  if (setting !== null) return { symbol: setting.short, setting };
  const written = record.spaceGroup === null ? null : record.spaceGroup.trim().replace(/\s+/g, '');
  return { symbol: written === '' ? null : written, setting: null };
}

/** Every declared operation is among the detected ones (same rotation, translation within the tolerance in Å). */
function containsOperations(found: SymOp[], declared: SymOp[], basis: ArrayLike<number>, toleranceAngstrom: number): boolean {
  const tol2 = toleranceAngstrom * toleranceAngstrom;
  return declared.every((op) =>
    found.some((f) => {
      for (let i = 0; i < 9; i++) if (f.rot[i] !== op.rot[i]) return false;
      return wrappedLength2(f.trans[0] - op.trans[0], f.trans[1] - op.trans[1], f.trans[2] - op.trans[2], basis) <= tol2;
    }),
  );
}

/** Counts that should be whole or simple fractions, without floating-point dust. */
function tidy(v: number): number {
  return Math.round(v * 1e6) / 1e6;
}
