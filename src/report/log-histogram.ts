// Histogram of positive values in equal bins of log10(value), for the nearest-neighbour distance panel.
// Bin edges sit on multiples of 1/binsPerDecade in log10 so that decades line up with axis ticks.
// Bins are half-open [a, b), as in numpy.histogram (except numpy closes its last bin; our last edge lies
// strictly above the largest value, so no value sits on it).

export interface LogHistogram {
  /** log10 of the bin edges, ascending (one more than `counts`); empty when no positive value exists. */
  edgesLog10: number[];
  counts: number[];
  /** Values equal to 0 (cannot be placed on a log axis; reported beside the plot). */
  zeros: number;
  /** null / NaN / negative entries skipped (structures without a distance). */
  missing: number;
}

export function logHistogram(values: ArrayLike<number | null>, binsPerDecade = 10): LogHistogram {
  if (!(binsPerDecade > 0) || !Number.isInteger(binsPerDecade)) {
    throw new Error(`logHistogram: binsPerDecade must be a positive integer, got ${binsPerDecade}`);
  }
  let zeros = 0;
  let missing = 0;
  let lo = Infinity;
  let hi = -Infinity;
  // First pass: range of the positive values in log10.
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || v === undefined || !Number.isFinite(v) || v < 0) missing++;
    else if (v === 0) zeros++;
    else {
      const l = Math.log10(v);
      if (l < lo) lo = l;
      if (l > hi) hi = l;
    }
  }
  if (lo === Infinity) return { edgesLog10: [], counts: [], zeros, missing };
  const first = Math.floor(lo * binsPerDecade);
  const last = Math.floor(hi * binsPerDecade) + 1;
  const n = last - first;
  const edgesLog10: number[] = [];
  for (let e = 0; e <= n; e++) edgesLog10.push((first + e) / binsPerDecade);
  const counts = new Array<number>(n).fill(0);
  // Second pass: place each value, correcting the rare case where floor() and the edge values disagree.
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || v === undefined || !Number.isFinite(v) || v <= 0) continue;
    const l = Math.log10(v);
    let b = Math.floor(l * binsPerDecade) - first;
    if (b < 0) b = 0;
    if (b > n - 1) b = n - 1;
    while (b > 0 && l < (edgesLog10[b] as number)) b--;
    while (b < n - 1 && l >= (edgesLog10[b + 1] as number)) b++;
    counts[b] = (counts[b] as number) + 1;
  }
  return { edgesLog10, counts, zeros, missing };
}
