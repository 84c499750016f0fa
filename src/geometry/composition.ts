// The composition of a compared crystal: element counts of its periodic set (every point of one unit cell,
// after the disorder and hydrogen policies), divided by their greatest common divisor and written in Hill order
// (Hill, J. Am. Chem. Soc. 1900). PDD and AMD see geometry only, so two structures are compared as possible
// duplicates only when these formulas are equal: zinc blende and diamond, or fluorite and uraninite, have the
// same point geometry but are different crystals.
import { hillFormula } from './molecules.js';

/** Reduced formula of the points' atomic numbers, e.g. "C3H4N2O2", "FeO" or "" for no points. */
export function reducedComposition(atomicNumbers: ArrayLike<number>): string {
  const counts = new Map<number, number>();
  for (let i = 0; i < atomicNumbers.length; i++) counts.set(atomicNumbers[i], (counts.get(atomicNumbers[i]) ?? 0) + 1);
  let g = 0;
  for (const c of counts.values()) g = gcd(g, c);
  const reduced = new Map<number, number>();
  for (const [z, c] of counts) reduced.set(z, c / g);
  return hillFormula(reduced);
}

/**
 * Composition classes: equal formulas share a class, numbered by first appearance (what the duplicate search
 * compares: structures of different classes are never duplicates).
 */
export function compositionClasses(formulas: readonly string[]): Int32Array {
  const ids = new Map<string, number>();
  const out = new Int32Array(formulas.length);
  formulas.forEach((f, i) => {
    let id = ids.get(f);
    if (id === undefined) ids.set(f, (id = ids.size));
    out[i] = id;
  });
  return out;
}

function gcd(a: number, b: number): number {
  while (b !== 0) [a, b] = [b, a % b];
  return a;
}
