// Data shared between the stages of the pipeline (see DEVELOPERS.md for the data flow).
// Plain data only: a type holds data, free functions in the stage modules transform it.
import type { SpaceGroupSetting } from './geometry/space-group-table.js';

/** Cell lengths in Å and angles in degrees, as a CIF gives them. */
export interface CellParams {
  a: number;
  b: number;
  c: number;
  alpha: number;
  beta: number;
  gamma: number;
}

/**
 * A symmetry operation x' = R x + t on fractional coordinates.
 * `rot` is the 3x3 matrix R in row-major order, `trans` the translation t (not wrapped).
 */
export interface SymOp {
  rot: number[];
  trans: number[];
}

/** One atom site as listed in the CIF (before symmetry expansion). */
export interface Site {
  label: string;
  /** Element symbol with standard capitalisation ("C", "Cl"); deuterium is reported as "H". */
  element: string;
  /** Fractional coordinates. */
  frac: [number, number, number];
  /** Site occupancy, 1 when the file gives none. */
  occupancy: number;
  /** `_atom_site_disorder_group` (null when absent or "."). */
  disorderGroup: string | null;
  /** `_atom_site_disorder_assembly` (null when absent or "."). */
  disorderAssembly: string | null;
  /** `_atom_site_attached_hydrogens`: hydrogens on this atom that have no sites of their own (absent when none). */
  attachedHydrogens?: number;
}

/** Where operations came from: listed in the block, built from the space-group symbol, or none (P1 assumed). */
export type OpsOrigin = 'listed' | 'symbol' | 'identity';

/** One data block read into a crystal record. */
export interface CrystalRecord {
  /** Block name without `data_`. */
  id: string;
  /** Path of the file as the user gave it (or as found in a folder). */
  file: string;
  /** Block name as written. */
  block: string;
  /** `file#block`. */
  source: string;
  /** 1-based line of the `data_` line. */
  line: number;
  cell: CellParams;
  ops: SymOp[];
  opsOrigin: OpsOrigin;
  /**
   * Declared space-group symbol (Hermann–Mauguin, else Hall) or null; when the file gives only a number, the
   * symbol of the setting taken for it.
   */
  spaceGroup: string | null;
  /**
   * The space-group table entry (src/geometry/space-group-table.ts) the operations were built from, when they were
   * built from a symbol or number; absent for listed operations and for Hall symbols outside the table.
   */
  setting?: SpaceGroupSetting;
  sites: Site[];
  /** Energy from `--energy-item`, in the file's unit, or null. */
  energy: number | null;
  /** The block's text exactly as read (for unique.cif). */
  text: string;
  /** Things the reader noticed and a user should know (ambiguous labels, settings, ...). */
  notes: string[];
}

/** A block that could not be used, with what a user needs to find and fix it. */
export interface RejectedBlock {
  id: string;
  file: string;
  block: string;
  source: string;
  line: number;
  reason: string;
  /** The block's text when it could be delimited, else "". */
  text: string;
}

export type BlockResult =
  | { kind: 'record'; record: CrystalRecord }
  | { kind: 'rejected'; rejected: RejectedBlock };

/**
 * A periodic point set: a lattice plus a motif, dimension-generic (1, 2 or 3).
 * Hot loops read the typed arrays directly.
 */
export interface PeriodicPointSet {
  dim: number;
  /** dim*dim, row r is lattice vector r in Cartesian Å. */
  basis: Float64Array;
  /** m*dim Cartesian coordinates of every motif point in one unit cell. */
  motif: Float64Array;
  /** Atomic number per motif point (0 for abstract points). */
  atomicNumbers: Uint8Array;
  /** Index into the motif of one representative per symmetry orbit (all points when no operations are known). */
  asym: Int32Array;
  /** Orbit size per `asym` entry; the sizes add up to the motif size. */
  multiplicity: Int32Array;
}

/**
 * The space group polysift reports for a crystal: the one detected in its atoms within a tolerance, or the one
 * its file declares when detection cannot be trusted (disorder, missing atoms, failure), with a note saying so.
 */
export interface CrystalSymmetry {
  /** Where the reported group comes from. */
  source: 'detected' | 'declared';
  /** International Tables number (null when a declared group is not one the table knows). */
  number: number | null;
  /** One short spelling of the reported group ('P21/c', 'P-1', 'Pna21'); as written for an unknown declared one. */
  symbol: string | null;
  /** Full Hermann–Mauguin symbol and Hall symbol of the reported group's default setting (null when unknown). */
  full: string | null;
  hall: string | null;
  /** Molecules per conventional cell of the reported group, and per asymmetric unit. */
  z: number | null;
  zPrime: number | null;
  /** The group the file declares, one spelling per setting ('P21/n', 'P1'), or as written when the table does not know it. */
  declared: string | null;
  declaredNumber: number | null;
  /** Molecules per asymmetric unit of the declared operations in the given cell. */
  declaredZPrime: number | null;
  /** Tolerance used (Å) and, for a detected group, the largest distance between an atom's image and its partner (Å). */
  toleranceAngstrom: number;
  deviationAngstrom: number | null;
  /** Operations of the reported group in the given cell (pure translations of a supercell included). */
  operations: number;
  /** What a reader should know: "written in P1; P21/c within 0.06 Å", or why the declared group is reported. */
  note: string | null;
}

/** Facts about a crystal that do not need the PDD. */
export interface CrystalFacts {
  volumeA3: number;
  atomsPerCell: number;
  densityGPerCm3: number;
  /** Molecules per given cell. */
  z: number;
  /** Molecules per asymmetric unit of the file's operations (null when operations are unknown); see `symmetry` for the crystal's. */
  zPrime: number | null;
  /** Each distinct molecule's formula in Hill order, e.g. "C6H6". */
  formulas: string[];
  /** The space group the crystal has (detected within a tolerance) or, failing that, the one its file declares. */
  symmetry: CrystalSymmetry;
  /**
   * When no hydrogen sites are listed but sites carry `_atom_site_attached_hydrogens`: those hydrogens per cell
   * and the density counting them (`densityGPerCm3` never counts them).
   */
  implicitHydrogens?: { perCell: number; densityGPerCm3: number };
  notes: string[];
}

/** Pointwise distance distribution: n weighted rows of k ascending distances (Å). */
export interface Pdd {
  k: number;
  /** n*k, row-major; rows sorted lexicographically. */
  rows: Float64Array;
  /** n weights adding up to 1. */
  weights: Float64Array;
}
