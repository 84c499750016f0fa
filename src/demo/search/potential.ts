// The demo search's pair potential between atoms of different molecules: Buckingham exp-6 plus point charges,
//   V(r) = A exp(-B r) - C / r^6 + k q_i q_j / r   (kJ/mol, r in Å, q in e),
// cut at CUTOFF_ANGSTROM with a shifted-force correction so that energy and force both go to zero at the cutoff
// (V_sf(r) = V(r) - V(rc) - (r - rc) V'(rc); common practice for smooth truncation, "Computer Simulation of
// Liquids", Allen & Tildesley, Oxford 1987; for the Coulomb term of neutral molecules the undamped shifted-force
// sum is the simplest of the pairwise alternatives to Ewald sums compared in "Is the Ewald summation still
// necessary?", Fennell & Gezelter, J. Chem. Phys. 2006; both from memory). The charges are what makes the
// landscape look like a real one: hydrogen-bonded packings sit well below the rest, so a handful of low-energy
// minima with large basins are found again and again, and energies spread over tens of kJ/mol.
// Like-atom exp-6 parameters are in the style of the published exp-6 sets for organic crystals (from memory, rounded;
// they are the demo's own numbers and model no real substance). Unlike pairs use the usual combining rules:
// A and C geometric means, B arithmetic mean (common practice).

export const CUTOFF_ANGSTROM = 12;
/** e^2 / (4 pi eps0) in kJ/mol Å per e^2 (CODATA 2018 constants; 1389.35 kJ/mol Å). */
export const COULOMB_KJ_A_PER_MOL = 1389.35458;
/** Two atoms of different molecules closer than this mean the packing has collapsed (exp-6 turns over below ~0.8 Å). */
export const COLLAPSE_ANGSTROM = 1.1;

/** Like-atom exp-6 parameters: A in kJ/mol, B in 1/Å, C in kJ/mol Å^6 (from memory, rounded). */
const LIKE: Record<string, { a: number; b: number; c: number }> = {
  H: { a: 11971, b: 3.74, c: 136.4 },
  C: { a: 369743, b: 3.6, c: 2439.8 },
  N: { a: 254529, b: 3.78, c: 1378.4 },
  O: { a: 230064, b: 3.96, c: 1123.6 },
};

/** Pair parameters for one molecule: exp-6 by atom type (one type per element present), charges per atom. */
export interface PairTable {
  /** Type index per atom of the molecule. */
  typeOf: Int32Array;
  nTypes: number;
  /** nTypes x nTypes arrays. */
  a: Float64Array;
  b: Float64Array;
  c: Float64Array;
  /** V(rc) and V'(rc) per pair type, for the shifted-force correction. */
  vCut: Float64Array;
  dvCut: Float64Array;
  cutoffAngstrom: number;
  /** Per atom pair of the molecule (n x n): COULOMB_KJ_A_PER_MOL * q_i * q_j; all zero without charges. */
  qq: Float64Array;
}

/** The pair table of a molecule: its elements and point charges (e, one per atom, summing to zero). */
export function pairTable(mol: { elements: readonly string[]; charges: readonly number[] }, cutoffAngstrom = CUTOFF_ANGSTROM): PairTable {
  const { elements, charges } = mol;
  if (charges.length !== elements.length) throw new Error(`the demo potential needs one charge per atom: ${charges.length} charges for ${elements.length} atoms`);
  const kinds: string[] = [];
  const typeOf = new Int32Array(elements.length);
  elements.forEach((el, i) => {
    if (!LIKE[el]) throw new Error(`the demo potential has no exp-6 parameters for element '${el}'`);
    let t = kinds.indexOf(el);
    if (t < 0) t = kinds.push(el) - 1;
    typeOf[i] = t;
  });
  const n = kinds.length;
  const a = new Float64Array(n * n);
  const b = new Float64Array(n * n);
  const c = new Float64Array(n * n);
  const vCut = new Float64Array(n * n);
  const dvCut = new Float64Array(n * n);
  for (let s = 0; s < n; s++)
    for (let t = 0; t < n; t++) {
      const p = LIKE[kinds[s]];
      const q = LIKE[kinds[t]];
      const k = s * n + t;
      a[k] = Math.sqrt(p.a * q.a);
      b[k] = (p.b + q.b) / 2;
      c[k] = Math.sqrt(p.c * q.c);
      const rc = cutoffAngstrom;
      vCut[k] = a[k] * Math.exp(-b[k] * rc) - c[k] / rc ** 6;
      dvCut[k] = -a[k] * b[k] * Math.exp(-b[k] * rc) + (6 * c[k]) / rc ** 7;
    }
  const m = elements.length;
  const qq = new Float64Array(m * m);
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) qq[i * m + j] = COULOMB_KJ_A_PER_MOL * charges[i] * charges[j];
  return { typeOf, nTypes: n, a, b, c, vCut, dvCut, cutoffAngstrom, qq };
}

/** Shifted-force energy (exp-6 plus charges) of atom i of one molecule and atom j of another at distance r (kJ/mol), for checks and tests. */
export function atomPairEnergy(table: PairTable, i: number, j: number, r: number): number {
  const rc = table.cutoffAngstrom;
  if (r >= rc) return 0;
  const k = table.typeOf[i] * table.nTypes + table.typeOf[j];
  const v = table.a[k] * Math.exp(-table.b[k] * r) - table.c[k] / r ** 6;
  const q2 = table.qq[i * table.typeOf.length + j];
  return v - table.vCut[k] - (r - rc) * table.dvCut[k] + q2 * (1 / r - 1 / rc + (r - rc) / (rc * rc));
}
