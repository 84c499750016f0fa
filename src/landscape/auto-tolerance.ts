// `--tolerance auto`: the duplicate tolerance from the run's own distances. The same minimum found
// again differs by optimiser noise; distinct minima by real structural changes; the tolerance belongs in the
// gap between the two (common practice), which shows on a log scale as an empty stretch between two populations.
//
// Which distances: every structure's nearest-neighbour distance shows the noise, but when every minimum was
// found more than once it never shows a distinct structure. So the distribution searched is the set of
// single-linkage edges: the minimum spanning forest (Kruskal, Proc. AMS 1956) of the pairs within a search
// radius, among structures of one composition. Within a group of copies its edges are nearest-neighbour
// distances (noise); between groups each edge is the distance from a group to its nearest other group (the
// closest distinct structures). Every structure's own nearest neighbour is one of these edges.
//
// The gap: the widest empty stretch between consecutive edge lengths on a log scale whose upper end is at least
// MIN_DISTINCT_ANGSTROM (a gap below it can only split the noise), whose lower end is at most MAX_NOISE_ANGSTROM
// (distinct minima that close exist, so noise reaching beyond cannot be told from them), and whose upper end is
// at most the search radius (when no edge lies above the noise, the radius is the gap's upper end: nothing
// distinct is closer). The tolerance is the gap's middle on the log scale. A gap
// narrower than MIN_CLEAR_DECADES is not trusted: the fixed default is used with a warning.
import type { ToleranceChoice } from './schema.js';

/**
 * Pairs are searched within this EMD (Å) in auto mode: the radius a run with the default tolerance searches anyway
 * (twice 0.04 Å), so auto costs no extra EMDs. Widening it costs dearly: measured on 2,000 generated structures
 * (200 packings written 10 times, P1 copies among them), the pair search took 14 s within 0.08 Å and 609 s within
 * 0.2 Å. When no distance lies above the noise within the radius, the gap reaches at least to the radius, and the
 * landscape records how far apart the closest kept structures turned out to be.
 */
export const AUTO_SEARCH_RADIUS_ANGSTROM = 0.08;
/** Gaps must end at or above this EMD (Å): the closest distinct minima measured lie at 0.044 Å. */
export const MIN_DISTINCT_ANGSTROM = 0.01;
/**
 * Gaps must begin at or below this EMD (Å), the closest distinct minima measured (the demo search's flat-minimum
 * pair): a run whose noise reaches further has no gap that separates its copies from such distinct minima.
 */
export const MAX_NOISE_ANGSTROM = 0.044;
/**
 * A gap narrower than this (decades, log10 of its ends' ratio; 0.3 is a factor of 2) is not trusted. Measured
 * gaps: 0.64-0.85 decades on the generated landscapes (noise 0.001-0.005 Å per coordinate) and 0.78 in the demo's
 * search; a landscape whose noise reaches into its distinct structures shows none wider than 0.1.
 */
export const MIN_CLEAR_DECADES = 0.3;

export interface WeightedPairs {
  i: ArrayLike<number>;
  j: ArrayLike<number>;
  d: ArrayLike<number>;
}

/**
 * Lengths (ascending) of the minimum spanning forest's edges over `pairs` among `n` structures, using only
 * pairs of one class (`classOf`). Ties are taken in (distance, i, j) order, so the result is deterministic.
 */
export function spanningEdgeLengths(n: number, pairs: WeightedPairs, classOf?: Int32Array): Float64Array {
  const m = pairs.d.length;
  const order = Array.from({ length: m }, (_, t) => t).filter((t) => !classOf || classOf[pairs.i[t]] === classOf[pairs.j[t]]);
  order.sort((x, y) => pairs.d[x] - pairs.d[y] || pairs.i[x] - pairs.i[y] || pairs.j[x] - pairs.j[y]);
  const parent = new Int32Array(n);
  for (let v = 0; v < n; v++) parent[v] = v;
  const find = (v: number) => {
    while (parent[v] !== v) {
      parent[v] = parent[parent[v]];
      v = parent[v];
    }
    return v;
  };
  const out: number[] = [];
  for (const t of order) {
    const a = find(pairs.i[t]);
    const b = find(pairs.j[t]);
    if (a === b) continue;
    parent[a] = b;
    out.push(pairs.d[t]);
  }
  return Float64Array.from(out);
}

/** Choose the tolerance from spanning-edge lengths (Å, ascending); `fallbackAngstrom` when no clear gap exists. */
export function chooseTolerance(lengths: ArrayLike<number>, searchRadiusAngstrom: number, fallbackAngstrom: number): ToleranceChoice {
  const within = Array.from(lengths).filter((x) => x <= searchRadiusAngstrom);
  const v = within.filter((x) => x > 0);
  const base = { searchRadiusAngstrom, edgeLengthsAngstrom: within, closestKeptAngstrom: null };
  if (v.length === 0) {
    // No noise and nothing distinct within the radius: every tolerance below it gives the same result.
    return {
      ...base, chosenAngstrom: fallbackAngstrom, gapLowAngstrom: null, gapHighAngstrom: null, gapDecades: null, gapOpen: false, clear: true,
      warning: null,
    };
  }
  let best = -1;
  let bestWidth = -Infinity;
  for (let t = 0; t < v.length; t++) {
    const low = v[t];
    const high = t + 1 < v.length ? v[t + 1] : searchRadiusAngstrom;
    if (high < MIN_DISTINCT_ANGSTROM || low > MAX_NOISE_ANGSTROM || high <= low) continue;
    const width = Math.log10(high / low);
    if (width > bestWidth) {
      bestWidth = width;
      best = t;
    }
  }
  if (best < 0) {
    return {
      ...base, chosenAngstrom: fallbackAngstrom, gapLowAngstrom: null, gapHighAngstrom: null, gapDecades: null, gapOpen: false, clear: false,
      warning:
        `no gap between optimiser noise and distinct structures: the single-linkage distances run on without a break from below ` +
        `${MAX_NOISE_ANGSTROM} Å (where distinct minima can lie) to ${fmt(v[v.length - 1])} Å; the default ${fallbackAngstrom} Å is used. ` +
        'Look at the nearest-neighbour histogram of the report and set --tolerance yourself',
    };
  }
  const low = v[best];
  const high = best + 1 < v.length ? v[best + 1] : searchRadiusAngstrom;
  const gap = { gapLowAngstrom: low, gapHighAngstrom: high, gapDecades: bestWidth, gapOpen: best + 1 === v.length };
  if (bestWidth < MIN_CLEAR_DECADES) {
    return {
      ...base, ...gap, chosenAngstrom: fallbackAngstrom, clear: false,
      warning:
        `no clear gap between optimiser noise and distinct structures: the widest, between ${fmt(low)} and ${fmt(high)} Å, spans only ` +
        `${bestWidth.toFixed(2)} decades (less than ${MIN_CLEAR_DECADES}); the default ${fallbackAngstrom} Å is used. ` +
        'Look at the nearest-neighbour histogram of the report and set --tolerance yourself',
    };
  }
  // The middle of the gap on the log scale, rounded to 4 significant digits so that it reads well.
  const chosen = Number(Math.sqrt(low * high).toPrecision(4));
  return { ...base, ...gap, chosenAngstrom: chosen, clear: true, warning: null };
}

function fmt(x: number): string {
  return Number(x.toPrecision(3)).toString();
}
