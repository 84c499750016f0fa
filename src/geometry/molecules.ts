// Molecules in a crystal: bond graph across cell faces, connected components with union-find that
// tracks lattice offsets (so a component that reaches its own translate is recognised as an extended
// network), Z, and formulas in Hill order.
// Bond rule: atoms i, j are bonded when d_ij < r_i + r_j + 0.4 Å, r from "Covalent radii revisited"
// (Cordero et al., Dalton Trans. 2008); the 0.4 Å slack is common practice.
import { planeSpacings } from './cell.js';
import { covalentRadiusAngstrom, elementSymbol } from './elements.js';

export const BOND_SLACK_ANGSTROM = 0.4;
/**
 * Two atoms closer than this are overlapping copies, not a bond: the shortest bond in any crystal is
 * H-H at 0.74 Å, and X-ray O-H / N-H distances stay above about 0.7 Å (common practice). Overlaps
 * mean disorder across a symmetry element modelled with full occupancies, or operations that do not
 * belong to the coordinates.
 */
export const OVERLAP_ANGSTROM = 0.5;
/** Radius used for elements the radius table does not cover (Z > 96); common practice, said in a note. */
const FALLBACK_RADIUS_ANGSTROM = 1.5;

export interface MoleculeInput {
  basis: Float64Array;
  count: number;
  /** 3*count fractional coordinates in [0,1). */
  frac: Float64Array;
  atomicNumbers: Uint8Array;
}

export interface Molecules {
  /** Component index per point. */
  component: Int32Array;
  /** Per component: true when it bonds to its own lattice translate (a chain, layer or 3-D network). */
  extended: boolean[];
  /** Per component: formula in Hill order (for an extended component: its smallest formula unit). */
  componentFormulas: string[];
  /** Molecules per cell: discrete molecules plus formula units of extended components. */
  z: number;
  /** Distinct formulas, in order of first appearance. */
  formulas: string[];
  /** Pairs of atoms closer than OVERLAP_ANGSTROM (each pair once, images included). */
  overlaps: number;
  /** Shortest such distance (Å) and one pair that has it (point indices), when overlaps > 0. */
  shortestOverlap: { distanceAngstrom: number; i: number; j: number } | null;
  notes: string[];
}

export function findMolecules(input: MoleculeInput, slackAngstrom = BOND_SLACK_ANGSTROM): Molecules {
  const { basis, count: m, frac, atomicNumbers } = input;
  const notes: string[] = [];
  const radius = new Float64Array(m);
  let maxRadius = 0;
  const noRadius = new Set<string>();
  for (let i = 0; i < m; i++) {
    const r = covalentRadiusAngstrom(atomicNumbers[i]!);
    if (r === null) noRadius.add(elementSymbol(atomicNumbers[i]!));
    radius[i] = r ?? FALLBACK_RADIUS_ANGSTROM;
    if (radius[i]! > maxRadius) maxRadius = radius[i]!;
  }
  if (noRadius.size > 0) {
    notes.push(`no covalent radius for ${[...noRadius].join(', ')}; ${FALLBACK_RADIUS_ANGSTROM} Å assumed for bonds`);
  }

  // Cell list: cut the cell into slabs at least `cutoffMax` thick along each axis, so every partner
  // within the cutoff sits within `range` slabs (counting across faces). Each (atom, lattice translation)
  // maps to one "virtual" bin, so walking the virtual bins around an atom visits every candidate once.
  const cutoffMax = 2 * maxRadius + slackAngstrom;
  const spacing = planeSpacings(basis);
  const nb0 = binsAlong(spacing[0], cutoffMax), nb1 = binsAlong(spacing[1], cutoffMax), nb2 = binsAlong(spacing[2], cutoffMax);
  const r0 = Math.ceil((cutoffMax * nb0) / spacing[0]);
  const r1 = Math.ceil((cutoffMax * nb1) / spacing[1]);
  const r2 = Math.ceil((cutoffMax * nb2) / spacing[2]);
  const nBins = nb0 * nb1 * nb2;
  const binOf = new Int32Array(m);
  const binStart = new Int32Array(nBins + 1);
  const binAtoms = new Int32Array(m);
  const b0 = new Int32Array(m), b1 = new Int32Array(m), b2 = new Int32Array(m);
  for (let i = 0; i < m; i++) {
    b0[i] = Math.min(nb0 - 1, Math.floor(frac[3 * i]! * nb0));
    b1[i] = Math.min(nb1 - 1, Math.floor(frac[3 * i + 1]! * nb1));
    b2[i] = Math.min(nb2 - 1, Math.floor(frac[3 * i + 2]! * nb2));
    binOf[i] = (b0[i]! * nb1 + b1[i]!) * nb2 + b2[i]!;
    binStart[binOf[i]! + 1]++;
  }
  for (let b = 0; b < nBins; b++) binStart[b + 1] += binStart[b]!;
  const fill = binStart.slice(0, nBins);
  for (let i = 0; i < m; i++) binAtoms[fill[binOf[i]!]++] = i;

  const uf = new OffsetUnionFind(m);
  const overlap2 = OVERLAP_ANGSTROM * OVERLAP_ANGSTROM;
  let overlaps = 0;
  let shortest2 = Infinity;
  let shortI = -1;
  let shortJ = -1;
  for (let i = 0; i < m; i++) {
    const fi0 = frac[3 * i]!, fi1 = frac[3 * i + 1]!, fi2 = frac[3 * i + 2]!;
    const ri = radius[i]!;
    for (let v0 = b0[i]! - r0; v0 <= b0[i]! + r0; v0++) {
      const n0 = Math.floor(v0 / nb0);
      const c0 = v0 - n0 * nb0;
      for (let v1 = b1[i]! - r1; v1 <= b1[i]! + r1; v1++) {
        const n1 = Math.floor(v1 / nb1);
        const c1 = v1 - n1 * nb1;
        for (let v2 = b2[i]! - r2; v2 <= b2[i]! + r2; v2++) {
          const n2 = Math.floor(v2 / nb2);
          const c2 = v2 - n2 * nb2;
          const bin = (c0 * nb1 + c1) * nb2 + c2;
          // Each unordered pair once: j > i, or j = i with a translation that is positive in lexicographic order.
          const selfImage = n0 > 0 || (n0 === 0 && (n1 > 0 || (n1 === 0 && n2 > 0)));
          for (let q = binStart[bin]!; q < binStart[bin + 1]!; q++) {
            const j = binAtoms[q]!;
            if (j < i || (j === i && !selfImage)) continue;
            const e0 = frac[3 * j]! + n0 - fi0, e1 = frac[3 * j + 1]! + n1 - fi1, e2 = frac[3 * j + 2]! + n2 - fi2;
            const x = e0 * basis[0]! + e1 * basis[3]! + e2 * basis[6]!;
            const y = e0 * basis[1]! + e1 * basis[4]! + e2 * basis[7]!;
            const z = e0 * basis[2]! + e1 * basis[5]! + e2 * basis[8]!;
            const dist2 = x * x + y * y + z * z;
            const cut = ri + radius[j]! + slackAngstrom;
            if (dist2 >= cut * cut) continue;
            uf.bond(i, j, n0, n1, n2);
            if (dist2 < overlap2) {
              overlaps++;
              if (dist2 < shortest2) {
                shortest2 = dist2;
                shortI = i;
                shortJ = j;
              }
            }
          }
        }
      }
    }
  }

  // Number the components and count their elements.
  const component = new Int32Array(m);
  const idOfRoot = new Int32Array(m).fill(-1);
  const counts: Map<number, number>[] = [];
  const extended: boolean[] = [];
  for (let i = 0; i < m; i++) {
    const root = uf.find(i);
    if (idOfRoot[root] === -1) {
      idOfRoot[root] = counts.length;
      counts.push(new Map());
      extended.push(uf.isPeriodic(root));
    }
    const c = idOfRoot[root]!;
    component[i] = c;
    const zc = atomicNumbers[i]!;
    counts[c]!.set(zc, (counts[c]!.get(zc) ?? 0) + 1);
  }

  let z = 0;
  let nExtended = 0;
  const componentFormulas: string[] = [];
  for (let c = 0; c < counts.length; c++) {
    const composition = counts[c]!;
    if (extended[c]) {
      // An extended component counts its formula units: the composition divided by its gcd.
      let g = 0;
      for (const v of composition.values()) g = gcd(g, v);
      const unit = new Map<number, number>();
      for (const [k, v] of composition) unit.set(k, v / g);
      componentFormulas.push(hillFormula(unit));
      z += g;
      nExtended++;
    } else {
      componentFormulas.push(hillFormula(composition));
      z += 1;
    }
  }
  const formulas = [...new Set(componentFormulas)];
  if (nExtended > 0) {
    notes.push(
      nExtended === counts.length
        ? 'bonds extend through the whole crystal (network, chain or layer, not discrete molecules): Z counts formula units'
        : `${nExtended} bonded component(s) extend through the crystal beside ${counts.length - nExtended} discrete molecule(s): Z adds their formula units to the molecules`,
    );
  }
  const shortestOverlap = overlaps > 0 ? { distanceAngstrom: Math.sqrt(shortest2), i: shortI, j: shortJ } : null;
  return { component, extended, componentFormulas, z, formulas, overlaps, shortestOverlap, notes };
}

/**
 * Formula in Hill order: with carbon, C first, H second, then the rest alphabetically; without
 * carbon, all alphabetically (Hill, J. Am. Chem. Soc. 1900; as used by CIF `_chemical_formula_sum`).
 * Counts of 1 are omitted. `composition` maps atomic number to count.
 */
export function hillFormula(composition: Map<number, number>): string {
  const bySymbol = new Map<string, number>();
  for (const [zc, n] of composition) {
    if (n <= 0) continue;
    const s = elementSymbol(zc);
    bySymbol.set(s, (bySymbol.get(s) ?? 0) + n);
  }
  const symbols = [...bySymbol.keys()].sort();
  let order: string[];
  if (bySymbol.has('C')) {
    order = ['C', ...(bySymbol.has('H') ? ['H'] : []), ...symbols.filter((s) => s !== 'C' && s !== 'H')];
  } else order = symbols;
  return order.map((s) => (bySymbol.get(s) === 1 ? s : `${s}${formatCount(bySymbol.get(s)!)}`)).join('');
}

function formatCount(n: number): string {
  return Number.isInteger(n) ? String(n) : String(Math.round(n * 1000) / 1000);
}

/** Number of slabs along an axis with plane spacing `spacing`, each at least `cutoff` thick (at least 1). */
function binsAlong(spacing: number, cutoff: number): number {
  return Math.max(1, Math.floor(spacing / cutoff));
}

function gcd(a: number, b: number): number {
  while (b !== 0) [a, b] = [b, a % b];
  return a;
}

/**
 * Union-find over atoms of one cell where each atom also carries the lattice offset that puts its
 * copy in the same molecule as the root's copy. A bond that closes a loop with a non-zero net offset
 * means the component reaches its own translate: it is extended, not a molecule.
 */
class OffsetUnionFind {
  private readonly parent: Int32Array;
  /** Offset of each atom's copy relative to its parent's frame (3 per atom). */
  private readonly rel: Int32Array;
  private readonly periodic: Uint8Array;
  private readonly path: number[] = [];

  constructor(n: number) {
    this.parent = Int32Array.from({ length: n }, (_, i) => i);
    this.rel = new Int32Array(3 * n);
    this.periodic = new Uint8Array(n);
  }

  /** Root of i; afterwards rel[i] is i's offset relative to the root (path compressed). */
  find(i: number): number {
    const { parent, rel, path } = this;
    path.length = 0;
    let r = i;
    while (parent[r] !== r) {
      path.push(r);
      r = parent[r]!;
    }
    // Walk back from the node nearest the root, turning each offset into one relative to the root.
    for (let k = path.length - 1; k >= 0; k--) {
      const a = path[k]!;
      const p = parent[a]!;
      if (p !== r) {
        rel[3 * a] += rel[3 * p]!;
        rel[3 * a + 1] += rel[3 * p + 1]!;
        rel[3 * a + 2] += rel[3 * p + 2]!;
      }
      parent[a] = r;
    }
    return r;
  }

  isPeriodic(root: number): boolean {
    return this.periodic[root] === 1;
  }

  /** Atom i (in the cell) is bonded to the copy of atom j translated by (n0, n1, n2). */
  bond(i: number, j: number, n0: number, n1: number, n2: number): void {
    const ri = this.find(i);
    const rj = this.find(j);
    const { rel } = this;
    // Offsets relative to the roots: copy (i, 0) sits in root copy -off_i, copy (j, n) in n - off_j.
    const a0 = i === ri ? 0 : rel[3 * i]!, a1 = i === ri ? 0 : rel[3 * i + 1]!, a2 = i === ri ? 0 : rel[3 * i + 2]!;
    const b0 = j === rj ? 0 : rel[3 * j]!, b1 = j === rj ? 0 : rel[3 * j + 1]!, b2 = j === rj ? 0 : rel[3 * j + 2]!;
    if (ri === rj) {
      if (-a0 !== n0 - b0 || -a1 !== n1 - b1 || -a2 !== n2 - b2) this.periodic[ri] = 1;
      return;
    }
    // Hang rj below ri with the offset that puts copy (j, n) in the same molecule copy as (i, 0).
    this.parent[rj] = ri;
    rel[3 * rj] = n0 - b0 + a0;
    rel[3 * rj + 1] = n1 - b1 + a1;
    rel[3 * rj + 2] = n2 - b2 + a2;
    if (this.periodic[rj]) this.periodic[ri] = 1;
  }
}
