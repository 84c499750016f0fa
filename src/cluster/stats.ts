// Agreement between two partitions (adjusted Rand index) and rank correlation (Spearman).

/**
 * Adjusted Rand index of two labellings of the same items (Hubert & Arabie, "Comparing partitions",
 * Journal of Classification 1985). Labels are compared by value only; every distinct value is one
 * group, so a noise label such as -1 is a group like any other (as in scikit-learn's
 * `sklearn.metrics.adjusted_rand_score`). Computed from pair counts as scikit-learn does: 1 when the
 * two partitions agree on every pair (including empty input and one item), otherwise
 * 2 (tp tn - fn fp) / ((tp + fn)(fn + tn) + (tp + fp)(fp + tn)), with exact integer pair counts.
 */
export function adjustedRandIndex(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = a.length;
  if (b.length !== n) throw new Error(`adjustedRandIndex: labellings have different lengths (${n} and ${b.length})`);
  // dense group numbers for each labelling
  const ga = denseGroups(a, 'first');
  const gb = denseGroups(b, 'second');
  const ka = ga.count;
  const kb = gb.count;
  // contingency counts, kept sparse as a map keyed by the pair of group numbers
  const cells = new Map<number, number>();
  const rowSum = new Float64Array(ka);
  const colSum = new Float64Array(kb);
  for (let i = 0; i < n; i++) {
    const key = ga.groups[i] * kb + gb.groups[i];
    cells.set(key, (cells.get(key) ?? 0) + 1);
    rowSum[ga.groups[i]]++;
    colSum[gb.groups[i]]++;
  }
  // ordered pair counts (each unordered pair counted twice, as scikit-learn's pair_confusion_matrix)
  let sumSquares = 0n;
  for (const c of cells.values()) sumSquares += BigInt(c) * BigInt(c);
  let rowSquares = 0n;
  for (let r = 0; r < ka; r++) rowSquares += BigInt(rowSum[r]) * BigInt(rowSum[r]);
  let colSquares = 0n;
  for (let c = 0; c < kb; c++) colSquares += BigInt(colSum[c]) * BigInt(colSum[c]);
  const nn = BigInt(n);
  const tp = sumSquares - nn;
  const fp = colSquares - sumSquares; // same group in b, different in a
  const fn = rowSquares - sumSquares; // same group in a, different in b
  const tn = nn * nn - fp - fn - sumSquares;
  if (fn === 0n && fp === 0n) return 1;
  const num = 2n * (tp * tn - fn * fp);
  const den = (tp + fn) * (fn + tn) + (tp + fp) * (fp + tn);
  return bigRatio(num, den);
}

/**
 * Spearman's rank correlation: Pearson's correlation of the ranks, tied values taking the average of
 * the ranks they span (as `scipy.stats.spearmanr`). NaN when fewer than two pairs, when either side is
 * constant, or when any value is NaN (scipy's default `nan_policy="propagate"`).
 */
export function spearman(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const n = x.length;
  if (y.length !== n) throw new Error(`spearman: samples have different lengths (${n} and ${y.length})`);
  if (n < 2) return NaN;
  for (let i = 0; i < n; i++) if (Number.isNaN(x[i]) || Number.isNaN(y[i])) return NaN;
  return pearson(averageRanks(x), averageRanks(y));
}

/** Ranks 1..n with ties given the mean of the ranks they occupy (scipy.stats.rankdata, method="average"). */
export function averageRanks(v: ArrayLike<number>): Float64Array {
  const n = v.length;
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((p, q) => (v[p] < v[q] ? -1 : v[p] > v[q] ? 1 : p - q));
  const ranks = new Float64Array(n);
  let start = 0;
  while (start < n) {
    let end = start + 1;
    while (end < n && v[order[end]] === v[order[start]]) end++;
    // positions start..end-1 hold equal values: ranks start+1 .. end, mean (start + 1 + end) / 2
    const r = (start + 1 + end) / 2;
    for (let t = start; t < end; t++) ranks[order[t]] = r;
    start = end;
  }
  return ranks;
}

/** Pearson's correlation coefficient (two-pass: means first, then centred sums). */
export function pearson(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i];
    my += y[i];
  }
  mx /= n;
  my /= n;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  if (sxx === 0 || syy === 0) return NaN;
  const r = sxy / Math.sqrt(sxx * syy);
  // rounding can push |r| a hair above 1
  return r > 1 ? 1 : r < -1 ? -1 : r;
}

function denseGroups(labels: ArrayLike<number>, which: string): { groups: Int32Array; count: number } {
  const map = new Map<number, number>();
  const groups = new Int32Array(labels.length);
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i];
    if (Number.isNaN(l)) throw new Error(`adjustedRandIndex: the ${which} labelling has NaN at position ${i}`);
    let g = map.get(l);
    if (g === undefined) {
      g = map.size;
      map.set(l, g);
    }
    groups[i] = g;
  }
  return { groups, count: map.size };
}

/** num / den for big integers whose ratio lies in [-1, 1], to within 2^-64 even when both exceed 2^53. */
function bigRatio(num: bigint, den: bigint): number {
  const neg = num < 0n !== den < 0n;
  const a = num < 0n ? -num : num;
  const b = den < 0n ? -den : den;
  // the integer quotient of a * 2^64 by b, converted once to a double and scaled back
  const r = Number((a << 64n) / b) / 2 ** 64;
  return neg ? -r : r;
}
