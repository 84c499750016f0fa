// Chemical elements: symbols, atomic numbers, standard atomic weights, covalent radii, and reading an
// element from a CIF atom site (`_atom_site_type_symbol`, else the label).
//
// Sources of the tables below:
// - Standard atomic weights: IUPAC 2021, abridged standard atomic weights (CIAAW; Prohaska et al.,
//   "Standard atomic weights of the elements 2021", Pure Appl. Chem. 94 (2022) 573). Values from
//   memory, five significant figures as the abridged table gives them. Elements with no stable isotope
//   and no standard weight carry the mass number of their longest-lived isotope (common practice).
// - Covalent radii in Å: B. Cordero et al., "Covalent radii revisited", Dalton Trans. (2008) 2832-2838,
//   Table 2, values from memory. C uses the sp3 value 0.76 (the paper also gives sp2 0.73 and sp 0.69);
//   Mn, Fe, Co use the low-spin values (1.39, 1.32, 1.26). The paper stops at Cm (Z = 96); heavier
//   elements have no radius here (null).
// The test checks symbols against gemmi and radii/weights against gemmi's own tables, with every
// difference listed and explained.

/** Element symbols by atomic number (index 0 unused). */
export const ELEMENT_SYMBOLS: readonly string[] = [
  '',
  'H', 'He', 'Li', 'Be', 'B', 'C', 'N', 'O', 'F', 'Ne',
  'Na', 'Mg', 'Al', 'Si', 'P', 'S', 'Cl', 'Ar', 'K', 'Ca',
  'Sc', 'Ti', 'V', 'Cr', 'Mn', 'Fe', 'Co', 'Ni', 'Cu', 'Zn',
  'Ga', 'Ge', 'As', 'Se', 'Br', 'Kr', 'Rb', 'Sr', 'Y', 'Zr',
  'Nb', 'Mo', 'Tc', 'Ru', 'Rh', 'Pd', 'Ag', 'Cd', 'In', 'Sn',
  'Sb', 'Te', 'I', 'Xe', 'Cs', 'Ba', 'La', 'Ce', 'Pr', 'Nd',
  'Pm', 'Sm', 'Eu', 'Gd', 'Tb', 'Dy', 'Ho', 'Er', 'Tm', 'Yb',
  'Lu', 'Hf', 'Ta', 'W', 'Re', 'Os', 'Ir', 'Pt', 'Au', 'Hg',
  'Tl', 'Pb', 'Bi', 'Po', 'At', 'Rn', 'Fr', 'Ra', 'Ac', 'Th',
  'Pa', 'U', 'Np', 'Pu', 'Am', 'Cm', 'Bk', 'Cf', 'Es', 'Fm',
  'Md', 'No', 'Lr',
];

/** Standard atomic weights (IUPAC 2021 abridged), by atomic number; index 0 unused. */
const ATOMIC_WEIGHTS = new Float64Array([
  0,
  1.008, 4.0026, 6.94, 9.0122, 10.81, 12.011, 14.007, 15.999, 18.998, 20.18,
  22.99, 24.305, 26.982, 28.085, 30.974, 32.06, 35.45, 39.95, 39.098, 40.078,
  44.956, 47.867, 50.942, 51.996, 54.938, 55.845, 58.933, 58.693, 63.546, 65.38,
  69.723, 72.63, 74.922, 78.971, 79.904, 83.798, 85.468, 87.62, 88.906, 91.224,
  92.906, 95.95, 98, 101.07, 102.91, 106.42, 107.87, 112.41, 114.82, 118.71,
  121.76, 127.6, 126.9, 131.29, 132.91, 137.33, 138.91, 140.12, 140.91, 144.24,
  145, 150.36, 151.96, 157.25, 158.93, 162.5, 164.93, 167.26, 168.93, 173.05,
  174.97, 178.49, 180.95, 183.84, 186.21, 190.23, 192.22, 195.08, 196.97, 200.59,
  204.38, 207.2, 208.98, 209, 210, 222, 223, 226, 227, 232.04,
  231.04, 238.03, 237, 244, 243, 247, 247, 251, 252, 257,
  258, 259, 266,
]);

/** Covalent radii in Å (Cordero et al. 2008), by atomic number; NaN where the paper gives none. */
const COVALENT_RADII_ANGSTROM = new Float64Array([
  NaN,
  0.31, 0.28, 1.28, 0.96, 0.84, 0.76, 0.71, 0.66, 0.57, 0.58,
  1.66, 1.41, 1.21, 1.11, 1.07, 1.05, 1.02, 1.06, 2.03, 1.76,
  1.7, 1.6, 1.53, 1.39, 1.39, 1.32, 1.26, 1.24, 1.32, 1.22,
  1.22, 1.2, 1.19, 1.2, 1.2, 1.16, 2.2, 1.95, 1.9, 1.75,
  1.64, 1.54, 1.47, 1.46, 1.42, 1.39, 1.45, 1.44, 1.42, 1.39,
  1.39, 1.38, 1.39, 1.4, 2.44, 2.15, 2.07, 2.04, 2.03, 2.01,
  1.99, 1.98, 1.98, 1.96, 1.94, 1.92, 1.92, 1.89, 1.9, 1.87,
  1.87, 1.75, 1.7, 1.62, 1.51, 1.44, 1.41, 1.36, 1.36, 1.32,
  1.45, 1.46, 1.48, 1.4, 1.5, 1.5, 2.6, 2.21, 2.15, 2.06,
  2.0, 1.96, 1.9, 1.87, 1.8, 1.69, NaN, NaN, NaN, NaN,
  NaN, NaN, NaN,
]);

const Z_BY_SYMBOL = new Map<string, number>(ELEMENT_SYMBOLS.map((s, z) => [s, z] as [string, number]).filter(([s]) => s !== ''));

/** Atomic number of a symbol in standard capitalisation ("Cl"), D and T count as H; 0 when unknown. */
export function atomicNumber(symbol: string): number {
  if (symbol === 'D' || symbol === 'T') return 1;
  return Z_BY_SYMBOL.get(symbol) ?? 0;
}

export function elementSymbol(z: number): string {
  const s = ELEMENT_SYMBOLS[z];
  if (s === undefined || s === '') throw new Error(`no element with atomic number ${z}`);
  return s;
}

/** Standard atomic weight in g/mol (IUPAC 2021 abridged). */
export function atomicWeight(z: number): number {
  if (!(z >= 1 && z < ATOMIC_WEIGHTS.length)) throw new Error(`no atomic weight for atomic number ${z}`);
  return ATOMIC_WEIGHTS[z]!;
}

/** Covalent radius in Å (Cordero et al. 2008), or null for elements the paper does not cover. */
export function covalentRadiusAngstrom(z: number): number | null {
  const r = COVALENT_RADII_ANGSTROM[z];
  return r === undefined || Number.isNaN(r) ? null : r;
}

export type ElementReading = { element: string; note?: string } | { error: string };

// Organic labels often append Greek-position letters to C, H, N, O in capitals (CA, CB, HA, NB, OG):
// with an all-capital two-letter prefix starting with one of these, we read the one-letter element.
const ONE_LETTER_FIRST = new Set(['C', 'H', 'N', 'O']);
// ...except the capitalised halogens, which are far more common as CL and BR than carbons named so.
const CAPITAL_TWO_LETTER_WINS = new Set(['CL', 'BR']);

/**
 * The element of an atom site: from `_atom_site_type_symbol` when given (charges such as `O2-`,
 * `Fe3+` stripped), else from the label (`Cl1` chlorine, `C12A` carbon, `H1A` hydrogen, `Wat`/`OW1`
 * water oxygen). D and T count as H. `note` says what was ambiguous or assumed.
 */
export function elementFromSite(typeSymbol: string | null, label: string): ElementReading {
  const type = typeSymbol?.trim() ?? '';
  if (type !== '' && type !== '?' && type !== '.') {
    if (isWaterName(type)) return { element: 'O', note: `type symbol '${type}' read as a water oxygen (not tungsten)` };
    const r = readSymbolPrefix(type, 'type symbol');
    if (!('error' in r)) return r;
    return { error: `atom site '${label}': type symbol '${type}' is not an element (${r.error})` };
  }
  const l = label.trim();
  if (l === '') return { error: 'atom site with an empty label and no type symbol' };
  // Water written as a residue name or as O with W (OW1, Ow); not tungsten.
  if (isWaterName(l)) {
    return { element: 'O', note: `label '${l}' read as a water oxygen (not tungsten)` };
  }
  const r = readSymbolPrefix(l, 'label');
  if ('error' in r) return { error: `atom site '${l}': no type symbol and ${r.error}` };
  return r;
}

/** Water written as a residue name (Wat, HOH, H2O) or as O with W (OW1, Ow); not tungsten. */
function isWaterName(text: string): boolean {
  return /^(wat|hoh|h2o)/i.test(text) || /^ow(\d|$|[^a-z])/i.test(text);
}

/** Read an element from the leading letters of a type symbol or label. */
function readSymbolPrefix(text: string, what: string): ElementReading {
  const letters = /^[A-Za-z]+/.exec(text)?.[0] ?? '';
  if (letters === '') return { error: `the ${what} '${text}' does not start with an element symbol` };
  const first = letters[0]!.toUpperCase();
  const second = letters.length > 1 ? letters[1]! : '';
  const one = first;
  const two = second === '' ? '' : first + second.toLowerCase();
  const oneIsElement = atomicNumber(one) > 0;
  const twoIsElement = two !== '' && Z_BY_SYMBOL.has(two);
  const hydrogenIsotope = (s: string): ElementReading =>
    s === 'D' || s === 'T'
      ? { element: 'H', note: `${what} '${text}' read as ${s === 'D' ? 'deuterium' : 'tritium'}, counted as H` }
      : { element: s };

  if (!twoIsElement) {
    if (!oneIsElement) return { error: `the ${what} '${text}' does not start with an element symbol` };
    const r = hydrogenIsotope(one);
    // A longer letter prefix that is not an element (e.g. 'Ow' in a type symbol) is worth saying.
    if (letters.length > 1 && what === 'type symbol') {
      return { element: 'element' in r ? r.element : one, note: `type symbol '${text}' read as ${one}` };
    }
    return r;
  }
  if (!oneIsElement) return { element: two };
  // Both readings are elements: mixed case ('Ca1', 'Cl1') says two letters, capitals are ambiguous.
  const secondIsLower = second === second.toLowerCase();
  if (what === 'type symbol') {
    // Type symbols start with the element symbol (CIF core dictionary), so two letters win, unless
    // more letters follow (an atom-type name such as 'Csp3'), which leaves both readings open.
    if (letters.length > 2) {
      const r = hydrogenIsotope(one);
      const element = 'element' in r ? r.element : one;
      return { element, note: `type symbol '${text}' read as ${element}, could be ${two}` };
    }
    return { element: two };
  }
  if (secondIsLower) return { element: two };
  const upper = (first + second).toUpperCase();
  const pickTwo = CAPITAL_TWO_LETTER_WINS.has(upper) || !ONE_LETTER_FIRST.has(first);
  const chosen = pickTwo ? two : one;
  const other = pickTwo ? one : two;
  const r = hydrogenIsotope(chosen);
  const element = 'element' in r ? r.element : chosen;
  return {
    element,
    note: `label '${text}' is ambiguous without _atom_site_type_symbol: read as ${element}, could be ${other === 'D' || other === 'T' ? 'H' : other}`,
  };
}
