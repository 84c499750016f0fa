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

  // Lattice translations to try around the nearest image: enough to reach the longest possible bond.
  const cutoffMax = 2 * maxRadius + slackAngstrom;
  const spacing = planeSpacings(basis);
  const reach = spacing.map((s) => Math.ceil(cutoffMax / s)) as [number, number, number];

  const uf = new OffsetUnionFind(m);
  const overlap2 = OVERLAP_ANGSTROM * OVERLAP_ANGSTROM;
  let overlaps = 0;
  let shortest2 = Infinity;
  let shortI = -1;
  let shortJ = -1;
  for (let i = 0; i < m; i++) {
    const fi0 = frac[3 * i]!, fi1 = frac[3 * i + 1]!, fi2 = frac[3 * i + 2]!;
    for (let j = i; j < m; j++) {
      const cut = radius[i]! + radius[j]! + slackAngstrom;
      const cut2 = cut * cut;
      const d0 = frac[3 * j]! - fi0, d1 = frac[3 * j + 1]! - fi1, d2 = frac[3 * j + 2]! - fi2;
      const s0 = -Math.round(d0), s1 = -Math.round(d1), s2 = -Math.round(d2);
      for (let n0 = s0 - reach[0]; n0 <= s0 + reach[0]; n0++) {
        for (let n1 = s1 - reach[1]; n1 <= s1 + reach[1]; n1++) {
          for (let n2 = s2 - reach[2]; n2 <= s2 + reach[2]; n2++) {
            if (i === j && n0 === 0 && n1 === 0 && n2 === 0) continue;
            const e0 = d0 + n0, e1 = d1 + n1, e2 = d2 + n2;
            const x = e0 * basis[0]! + e1 * basis[3]! + e2 * basis[6]!;
            const y = e0 * basis[1]! + e1 * basis[4]! + e2 * basis[7]!;
            const z = e0 * basis[2]! + e1 * basis[5]! + e2 * basis[8]!;
            const dist2 = x * x + y * y + z * z;
            if (dist2 < cut2) {
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
