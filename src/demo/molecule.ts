// The invented rigid molecule of the demo and of the test landscapes: "orvazinone", C3H4N2O2, 11 atoms.
// A planar six-membered ring O1–C2–N3–C4–C5–N6 with an exocyclic C2=O7 and hydrogens on N3, C4, C5 and N6.
// Bond lengths are typical values (ring ~1.39 Å, C=O 1.22 Å, N–H 1.01 Å, C–H 1.08 Å; common practice,
// from memory). It is an invented compound for invented data, not a model of any real substance.
// Its point charges (for the demo search's potential) are invented too, in the usual pattern of fitted charges of
// amides and lactones: negative carbonyl and ring heteroatoms, a positive carbonyl carbon, positive N–H hydrogens
// (common practice, from memory); they sum to zero.

export const MOLECULE_NAME = 'orvazinone';

/** Standard atomic weights (IUPAC 2021 abridged values; from memory) for the elements used here, g/mol. */
export const ATOMIC_MASS: Record<string, number> = { H: 1.008, C: 12.011, N: 14.007, O: 15.999 };

export interface MoleculeTemplate {
  elements: string[];
  labels: string[];
  /** Cartesian Å, 3 per atom, centred on the centroid of the atoms. */
  xyz: Float64Array;
  massGPerMol: number;
  /** Point charge of each atom (e); sums to zero. */
  charges: number[];
}

/**
 * Invented point charges (e) in atom order: ring O1, C2, N3, C4, C5, N6, then O7 (on C2), H (on N3), H (on C4),
 * H (on C5), H (on N6).
 */
const CHARGES = [-0.3, 0.7, -0.45, 0.1, -0.01, -0.45, -0.55, 0.38, 0.1, 0.1, 0.38];

export function orvazinone(): MoleculeTemplate {
  const ringRadius = 1.39;
  const ring = ['O', 'C', 'N', 'C', 'C', 'N'];
  const elements: string[] = [];
  const pts: number[] = [];
  for (let k = 0; k < 6; k++) {
    const ang = (Math.PI / 3) * k;
    elements.push(ring[k]);
    pts.push(ringRadius * Math.cos(ang), ringRadius * Math.sin(ang), 0);
  }
  // Exocyclic atoms sit radially outside their ring atom.
  const exo: Array<[number, string, number]> = [
    [1, 'O', 1.22],
    [2, 'H', 1.01],
    [3, 'H', 1.08],
    [4, 'H', 1.08],
    [5, 'H', 1.01],
  ];
  for (const [k, el, bond] of exo) {
    const ang = (Math.PI / 3) * k;
    elements.push(el);
    pts.push((ringRadius + bond) * Math.cos(ang), (ringRadius + bond) * Math.sin(ang), 0);
  }
  const n = elements.length;
  let cx = 0;
  let cy = 0;
  for (let i = 0; i < n; i++) {
    cx += pts[3 * i];
    cy += pts[3 * i + 1];
  }
  cx /= n;
  cy /= n;
  const xyz = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    xyz[3 * i] = pts[3 * i] - cx;
    xyz[3 * i + 1] = pts[3 * i + 1] - cy;
    xyz[3 * i + 2] = 0;
  }
  const counts: Record<string, number> = {};
  const labels = elements.map((el) => {
    counts[el] = (counts[el] ?? 0) + 1;
    return `${el}${counts[el]}`;
  });
  const massGPerMol = elements.reduce((s, el) => s + ATOMIC_MASS[el], 0);
  return { elements, labels, xyz, massGPerMol, charges: CHARGES.slice() };
}
