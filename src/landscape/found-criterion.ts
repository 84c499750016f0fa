// When `locate` calls a reference "found": its own criterion, not the duplicate tolerance. An experimental structure
// differs from its predicted minimum by more than optimiser noise (thermal expansion, short X-H bonds in X-ray data),
// so it needs a wider limit; and a structure that is absent from a landscape sits among several kept structures at
// about the same distance, while one that is present stands out as much nearer than the rest. Two rules, tried in
// order on the comparison distance d1 of the nearest kept structure and d2 of the second nearest:
//   1. within the tolerance: d1 <= tolerance -> found;
//   2. clear gap: tolerance < d1 <= gap limit, and d2 >= gap ratio x d1 (or there is no second) -> found;
//   otherwise not found (beyond the gap limit, or between the limits without a clear gap).
// Defaults come from `npm run bench locate-threshold` (README, "How locate decides found").
// The decision says which rule decided and how clear it was: the margin is how far the deciding quantity lies from
// the limit that would flip the decision, as a fraction of that limit (0 = on the limit).

export interface FoundCriterion {
  /** Comparison distance (Å) within which the nearest kept structure is the reference. */
  toleranceAngstrom: number;
  /** Beyond the tolerance and up to this distance (Å), the nearest is the reference when it stands out by the gap ratio. */
  gapLimitAngstrom: number;
  /** How many times farther the second-nearest kept structure must be for the gap rule. */
  gapRatio: number;
}

/**
 * Measured defaults (`npm run bench locate-threshold`; k = 100, scale-free comparison). On the demo's mini search
 * (186 kept structures), experimental-like versions of every kept structure lie within 0.121 Å (cell stretched up to
 * 3% per axis, molecules rigid) and 0.127 Å (X-H bonds 0.1 Å shorter, hydrogens kept) of their own structure, while a
 * structure taken out of the landscape lies at least 0.143 Å from every other kept structure, and among several at
 * about the same distance: its second nearest at most 1.40x (hydrogens kept) or 1.97x (dropped) farther, 1.60x at the
 * 99th percentile. 0.13 Å sits between the two; beyond it, up to 0.20 Å, a nearest that stands out by 1.75x is found
 * too (X-H shortening and expansion together). With these values no reference taken out of either measured landscape
 * was found, and every stretched or shortened one within the tolerance was found as its own structure.
 */
export const DEFAULT_FOUND_CRITERION: FoundCriterion = { toleranceAngstrom: 0.13, gapLimitAngstrom: 0.2, gapRatio: 1.75 };

export type FoundRule = 'within-tolerance' | 'clear-gap' | 'no-clear-gap' | 'beyond-gap-limit' | 'nothing-to-compare';

/** A margin below this fraction of its limit makes a decision marginal. */
export const MARGINAL_FRACTION = 0.25;

export interface FoundDecision {
  found: boolean;
  rule: FoundRule;
  /** Distance (Å) of the nearest and second-nearest kept structure, as compared (null when absent). */
  nearestAngstrom: number | null;
  secondAngstrom: number | null;
  /** d2 / d1 (null without a second, Infinity when d1 = 0 < d2). */
  gapRatio: number | null;
  /** Distance of the deciding quantity from the limit that would flip the decision, as a fraction of that limit. */
  margin: number;
  /** `clear`, `marginal` (margin below MARGINAL_FRACTION) or `ambiguous` (found, but the second is also within the tolerance without a clear gap). */
  clarity: 'clear' | 'marginal' | 'ambiguous';
}

/** Check a criterion; throws a message naming the option at fault. */
export function checkCriterion(c: FoundCriterion): void {
  if (!(Number.isFinite(c.toleranceAngstrom) && c.toleranceAngstrom >= 0)) throw new Error(`the tolerance must be a number of Å >= 0, not ${c.toleranceAngstrom}`);
  if (!(Number.isFinite(c.gapLimitAngstrom) && c.gapLimitAngstrom >= c.toleranceAngstrom)) {
    throw new Error(`the gap limit must be a number of Å at least the tolerance (${c.toleranceAngstrom}), not ${c.gapLimitAngstrom}`);
  }
  if (!(Number.isFinite(c.gapRatio) && c.gapRatio >= 1)) throw new Error(`the gap ratio must be a number >= 1, not ${c.gapRatio}`);
}

/** Decide from the nearest (d1) and second-nearest (d2) comparison distances. */
export function decideFound(d1: number | null, d2: number | null, c: FoundCriterion): FoundDecision {
  const base = { nearestAngstrom: d1, secondAngstrom: d2 };
  if (d1 === null) return { ...base, found: false, rule: 'nothing-to-compare', gapRatio: null, margin: 1, clarity: 'clear' };
  const ratio = d2 === null ? null : d1 > 0 ? d2 / d1 : d2 > 0 ? Infinity : 1;
  const clearGap = ratio === null || ratio >= c.gapRatio;
  // Fractions of a limit (a zero limit counts any excess as fully clear).
  const frac = (x: number, limit: number) => (limit > 0 ? Math.min(1, x / limit) : 1);
  const ratioMargin = ratio === null ? 1 : frac(Math.abs(ratio - c.gapRatio), c.gapRatio);
  const clarity = (margin: number): 'clear' | 'marginal' => (margin < MARGINAL_FRACTION ? 'marginal' : 'clear');
  if (d1 <= c.toleranceAngstrom) {
    const margin = frac(c.toleranceAngstrom - d1, c.toleranceAngstrom);
    const ambiguous = d2 !== null && d2 <= c.toleranceAngstrom && !clearGap;
    return { ...base, found: true, rule: 'within-tolerance', gapRatio: ratio, margin, clarity: ambiguous ? 'ambiguous' : clarity(margin) };
  }
  if (d1 > c.gapLimitAngstrom) {
    const margin = frac(d1 - c.gapLimitAngstrom, c.gapLimitAngstrom);
    return { ...base, found: false, rule: 'beyond-gap-limit', gapRatio: ratio, margin, clarity: clarity(margin) };
  }
  // Between the tolerance and the gap limit the gap decides; either limit moving past d1 could flip it too.
  const distanceMargin = Math.min(frac(d1 - c.toleranceAngstrom, c.toleranceAngstrom), frac(c.gapLimitAngstrom - d1, c.gapLimitAngstrom));
  if (clearGap) {
    const margin = Math.min(ratioMargin, frac(c.gapLimitAngstrom - d1, c.gapLimitAngstrom));
    return { ...base, found: true, rule: 'clear-gap', gapRatio: ratio, margin, clarity: clarity(margin) };
  }
  const margin = Math.min(ratioMargin, distanceMargin);
  return { ...base, found: false, rule: 'no-clear-gap', gapRatio: ratio, margin, clarity: clarity(margin) };
}

/** The decision in words, e.g. "within the tolerance (0.062 <= 0.15 Å), clear". */
export function decisionPhrase(d: FoundDecision, c: FoundCriterion): string {
  const f = (x: number | null) => (x === null ? 'none' : x.toPrecision(3));
  const r = d.gapRatio === null ? 'no second kept structure' : d.gapRatio === Infinity ? 'the second infinitely farther' : `the second ${d.gapRatio.toFixed(2)}x farther`;
  switch (d.rule) {
    case 'nothing-to-compare':
      return 'the landscape keeps no structures';
    case 'within-tolerance':
      return `within the tolerance (${f(d.nearestAngstrom)} <= ${c.toleranceAngstrom} Å; ${r}), ${d.clarity}`;
    case 'clear-gap':
      return `beyond the tolerance but standing out (${f(d.nearestAngstrom)} <= ${c.gapLimitAngstrom} Å and ${r}, at least ${c.gapRatio}x), ${d.clarity}`;
    case 'no-clear-gap':
      return `beyond the tolerance (${f(d.nearestAngstrom)} > ${c.toleranceAngstrom} Å) without a clear gap (${r}, under ${c.gapRatio}x), ${d.clarity}`;
    case 'beyond-gap-limit':
      return `beyond the gap limit (${f(d.nearestAngstrom)} > ${c.gapLimitAngstrom} Å), ${d.clarity}`;
  }
}
