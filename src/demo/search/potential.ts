// The demo search's pair potential between atoms of different molecules: Buckingham exp-6,
//   V(r) = A exp(-B r) - C / r^6   (kJ/mol, r in Å),
// cut at CUTOFF_ANGSTROM with a shifted-force correction so that energy and force both go to zero at the cutoff
// (V_sf(r) = V(r) - V(rc) - (r - rc) V'(rc); common practice for smooth truncation). No point charges.
// Like-atom parameters are in the style of the published exp-6 sets for organic crystals (from memory, rounded;
// they are the demo's own numbers and model no real substance). Unlike pairs use the usual combining rules:
// A and C geometric means, B arithmetic mean (common practice).

export const CUTOFF_ANGSTROM = 12;
/** Two atoms of different molecules closer than this mean the packing has collapsed (exp-6 turns over below ~0.8 Å). */
export const COLLAPSE_ANGSTROM = 1.1;

/** Like-atom exp-6 parameters: A in kJ/mol, B in 1/Å, C in kJ/mol Å^6 (from memory, rounded). */
const LIKE: Record<string, { a: number; b: number; c: number }> = {
  H: { a: 11971, b: 3.74, c: 136.4 },
  C: { a: 369743, b: 3.6, c: 2439.8 },
  N: { a: 254529, b: 3.78, c: 1378.4 },
  O: { a: 230064, b: 3.96, c: 1123.6 },
};

/** Pair parameters for the elements of one molecule, indexed by atom type (one type per element present). */
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
}

export function pairTable(elements: readonly string[], cutoffAngstrom = CUTOFF_ANGSTROM): PairTable {
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
  return { typeOf, nTypes: n, a, b, c, vCut, dvCut, cutoffAngstrom };
}

/** Shifted-force exp-6 energy of one pair at distance r < rc (kJ/mol), for checks and tests. */
export function pairEnergy(table: PairTable, typeI: number, typeJ: number, r: number): number {
  if (r >= table.cutoffAngstrom) return 0;
  const k = typeI * table.nTypes + typeJ;
  const v = table.a[k] * Math.exp(-table.b[k] * r) - table.c[k] / r ** 6;
  return v - table.vCut[k] - (r - table.cutoffAngstrom) * table.dvCut[k];
}
