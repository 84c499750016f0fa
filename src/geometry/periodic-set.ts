// Crystal record -> periodic point set: apply the symmetry operations to the listed sites, wrap to
// [0,1), merge images that land on the same point (special positions, sites listed twice), and keep
// one representative and the orbit size per symmetry orbit so later stages can work on the
// asymmetric unit only.
import type { CrystalRecord, PeriodicPointSet, SymOp } from '../types.js';
import { cellToBasis, fracToCartesian } from './cell.js';
import { selectOrderedSites } from './disorder.js';
import { atomicNumber } from './elements.js';
import { identityOp, isClosedGroup } from './symmetry.js';

/**
 * Two images closer than this (Cartesian, nearest lattice translate) are one atom.
 * Why 0.1 Å: files round fractional coordinates to 3-5 decimals, so a site meant to sit on a special
 * position lands up to sqrt(3) * 2 * 0.0005 * a from its own image with 3 decimals (0.035 Å at
 * a = 20 Å, 0.09 Å at 50 Å), and values like 0.3333 for 1/3 add to it; on the other side, no two
 * distinct atoms in a real crystal are closer than about 0.7 Å (the H-H bond, 0.74 Å), and split
 * disorder positions that are meant to stay apart are removed by the disorder policy first.
 * 0.1 Å sits well inside that gap (common practice puts this tolerance at a few hundredths to a tenth
 * of an Å).
 */
export const MERGE_TOLERANCE_ANGSTROM = 0.1;

export type HydrogenChoice = 'keep' | 'drop';

/** The symmetry-expanded content of a cell: one entry per distinct point. */
export interface ExpandedSites {
  basis: Float64Array;
  /** Number of points. */
  count: number;
  /** 3*count fractional coordinates in [0,1). */
  frac: Float64Array;
  /** 3*count Cartesian coordinates in Å. */
  cart: Float64Array;
  atomicNumbers: Uint8Array;
  /** Occupancy of the listed site each point comes from. */
  occupancy: Float64Array;
  /** Index of the listed site each point comes from. */
  siteIndex: Int32Array;
  /** Per orbit: index of its first point (the listed site's own position); orbits are contiguous. */
  orbitStart: Int32Array;
  /** Per orbit: number of distinct points. */
  orbitSize: Int32Array;
  /** Listed sites left out because they coincide with an earlier site. */
  duplicateSites: number;
  notes: string[];
}

export interface ExpandOptions {
  toleranceAngstrom?: number;
  /**
   * Two listed sites of different elements on one position (mixed occupancy): 'keep-first' keeps the
   * site listed first (a point set has one atom per point), 'keep-all' keeps both (for occupancy-weighted
   * mass). Sites of the same element on one position are merged, except with 'keep-all' when their
   * occupancies add up to at most 1 (alternative atoms of a disordered site).
   */
  sharedPositions?: 'keep-first' | 'keep-all';
}

/**
 * Expand the listed sites `siteIndices` of `record` by its operations and merge coinciding images.
 * Throws when a site has non-finite coordinates or an element we do not know.
 */
export function expandSites(
  record: Pick<CrystalRecord, 'cell' | 'ops' | 'sites'>, siteIndices: number[], options: ExpandOptions = {},
): ExpandedSites {
  const toleranceAngstrom = options.toleranceAngstrom ?? MERGE_TOLERANCE_ANGSTROM;
  const keepAllShared = options.sharedPositions === 'keep-all';
  const basis = cellToBasis(record.cell);
  const ops: SymOp[] = record.ops.length > 0 ? record.ops : [identityOp()];
  const notes: string[] = [];
  if (ops.length > 1 && !closedCached(ops)) {
    notes.push(`the ${ops.length} listed symmetry operations do not form a group (products of them are missing); used as listed`);
  }
  const capacity = Math.max(1, siteIndices.length * ops.length);
  const frac = new Float64Array(3 * capacity);
  const cart = new Float64Array(3 * capacity);
  const z = new Uint8Array(capacity);
  const occ = new Float64Array(capacity);
  const siteOf = new Int32Array(capacity);
  const orbitStart: number[] = [];
  const orbitSize: number[] = [];
  const tol2 = toleranceAngstrom * toleranceAngstrom;
  let count = 0;
  let specialSites = 0;
  let largestGap = 0;
  const duplicateNotes: string[] = [];

  for (const si of siteIndices) {
    const site = record.sites[si]!;
    const [x, y, w] = site.frac;
    if (!Number.isFinite(x) || !Number.isFinite(y) || !Number.isFinite(w)) {
      throw new Error(`atom site '${site.label}' has coordinates that are not numbers (${site.frac.join(', ')})`);
    }
    const zi = atomicNumber(site.element);
    if (zi === 0) throw new Error(`atom site '${site.label}' has an unknown element '${site.element}'`);

    // A site that coincides with a point already placed is a copy listed twice (or a shared position).
    const f0 = wrap(x), f1 = wrap(y), f2 = wrap(w);
    const hit = nearestWithin(basis, frac, 0, count, f0, f1, f2, tol2);
    if (hit >= 0) {
      const other = record.sites[siteOf[hit]!]!;
      // For occupancy-weighted mass, partial sites sharing a position are alternatives: keep both.
      const alternatives = keepAllShared && occ[hit]! + site.occupancy <= 1 + 0.01;
      if (z[hit] === zi && !alternatives) {
        duplicateNotes.push(`site ${site.label} is a symmetry copy of site ${other.label}; merged`);
        continue;
      }
      if (!keepAllShared) {
        duplicateNotes.push(
          `sites ${other.label} (${other.element}) and ${site.label} (${site.element}) share one position (mixed occupancy?); kept ${other.label}`,
        );
        continue;
      }
    }

    const start = count;
    for (const op of ops) {
      const R = op.rot, t = op.trans;
      const g0 = wrap(R[0]! * x + R[1]! * y + R[2]! * w + t[0]!);
      const g1 = wrap(R[3]! * x + R[4]! * y + R[5]! * w + t[1]!);
      const g2 = wrap(R[6]! * x + R[7]! * y + R[8]! * w + t[2]!);
      // Merge with an image of this site already placed (special position).
      const same = nearestWithin(basis, frac, start, count, g0, g1, g2, tol2);
      if (same >= 0) {
        const gap = Math.sqrt(periodicDistance2(basis, frac, same, g0, g1, g2));
        if (gap > largestGap) largestGap = gap;
        continue;
      }
      frac[3 * count] = g0;
      frac[3 * count + 1] = g1;
      frac[3 * count + 2] = g2;
      fracToCartesian(basis, g0, g1, g2, cart, 3 * count);
      z[count] = zi;
      occ[count] = site.occupancy;
      siteOf[count] = si;
      count++;
    }
    orbitStart.push(start);
    orbitSize.push(count - start);
    if (count - start < ops.length) specialSites++;
  }

  if (specialSites > 0) {
    notes.push(
      `${specialSites} site(s) on special positions: symmetry images within ${toleranceAngstrom} Å merged (largest gap ${largestGap.toFixed(3)} Å)`,
    );
  }
  // Many copies (a file that lists the whole cell and the operations too) make one summary note.
  if (duplicateNotes.length > 3) {
    notes.push(`${duplicateNotes.length} listed sites coincide with earlier sites and were merged, e.g. ${duplicateNotes.slice(0, 2).join('; ')}`);
  } else notes.push(...duplicateNotes);
  return {
    basis,
    count,
    frac: frac.slice(0, 3 * count),
    cart: cart.slice(0, 3 * count),
    atomicNumbers: z.slice(0, count),
    occupancy: occ.slice(0, count),
    siteIndex: siteOf.slice(0, count),
    orbitStart: Int32Array.from(orbitStart),
    orbitSize: Int32Array.from(orbitSize),
    duplicateSites: duplicateNotes.length,
    notes,
  };
}

/**
 * The periodic point set of a crystal record (dimension 3): the disorder policy of ./disorder.ts picks
 * the sites, hydrogens (and deuterium) are kept or dropped, the operations are applied and coinciding
 * images merged. `notes` say what was done. Throws with a reason a user can act on when no atoms remain.
 */
export function toPeriodicSet(record: CrystalRecord, opts: { hydrogens: HydrogenChoice }): { set: PeriodicPointSet; notes: string[] } {
  if (record.sites.length === 0) {
    throw new Error(`${record.source}: the block lists no atom sites, so there is no structure to compare`);
  }
  const selection = selectOrderedSites(record.sites);
  const notes = [...selection.notes];
  let indices = selection.kept;
  if (opts.hydrogens === 'drop') {
    const before = indices.length;
    indices = indices.filter((i) => record.sites[i]!.element !== 'H');
    const dropped = before - indices.length;
    if (dropped > 0) notes.push(`hydrogens dropped: ${dropped} hydrogen site(s) left out (keep them with --hydrogens keep)`);
    if (indices.length === 0) {
      throw new Error(`${record.source}: every atom site is hydrogen, so nothing is left with --hydrogens drop; use --hydrogens keep`);
    }
  }
  if (indices.length === 0) throw new Error(`${record.source}: no atom site is left after the disorder policy`);
  const ex = expandSites(record, indices);
  notes.push(...ex.notes);
  const set: PeriodicPointSet = {
    dim: 3,
    basis: ex.basis,
    motif: ex.cart,
    atomicNumbers: ex.atomicNumbers,
    asym: ex.orbitStart,
    multiplicity: ex.orbitSize,
  };
  return { set, notes };
}

// ---- helpers ----

// Records built from one symbol share one operation list; checking it once is enough.
const closedCache = new WeakMap<SymOp[], boolean>();
function closedCached(ops: SymOp[]): boolean {
  let v = closedCache.get(ops);
  if (v === undefined) closedCache.set(ops, (v = isClosedGroup(ops)));
  return v;
}

/** Wrap a fractional coordinate to [0,1). */
function wrap(v: number): number {
  const w = v - Math.floor(v);
  return w >= 1 ? 0 : w;
}

/** Squared Cartesian distance between point `i` of `frac` and (g0,g1,g2), nearest lattice translate. */
function periodicDistance2(basis: Float64Array, frac: Float64Array, i: number, g0: number, g1: number, g2: number): number {
  let d0 = g0 - frac[3 * i]!;
  let d1 = g1 - frac[3 * i + 1]!;
  let d2 = g2 - frac[3 * i + 2]!;
  d0 -= Math.round(d0);
  d1 -= Math.round(d1);
  d2 -= Math.round(d2);
  const x = d0 * basis[0]! + d1 * basis[3]! + d2 * basis[6]!;
  const y = d0 * basis[1]! + d1 * basis[4]! + d2 * basis[7]!;
  const z = d0 * basis[2]! + d1 * basis[5]! + d2 * basis[8]!;
  return x * x + y * y + z * z;
}

/** Index in [from, to) of a point within sqrt(tol2) of (g0,g1,g2), or -1. */
function nearestWithin(
  basis: Float64Array, frac: Float64Array, from: number, to: number, g0: number, g1: number, g2: number, tol2: number,
): number {
  for (let i = from; i < to; i++) {
    if (periodicDistance2(basis, frac, i, g0, g1, g2) < tol2) return i;
  }
  return -1;
}
