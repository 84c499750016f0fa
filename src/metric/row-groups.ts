// Near-equal rows of a PDD grouped around leader rows. A crystal written in P1 or in a supercell, with an
// optimiser's noise, has one PDD row per atom, and the rows of symmetry-equivalent atoms differ only by that noise;
// grouped, they are as few as the rows of the asymmetric unit. Two uses, both exact:
// - a cheap tier: the merged PDD (leader rows carrying their group's weight) lies within `displacement` of the PDD
//   in EMD, so EMD(merged A, merged B) is within displacement(A) + displacement(B) of EMD(A, B) (continuity; see
//   below), a lower and an upper bound at the price of a much smaller transport problem;
// - the EMD solvers: a group bounds the ground distance of all its rows at once (emd-split.ts, transport floors).
//
// Why the merged PDD is close: sending every row's weight to its leader is a transport plan from the PDD to the
// merged PDD whose cost is sum_i w_i |row_i - leader(i)|_inf = displacement, so EMD(PDD, merged) <= displacement;
// EMD is a metric (Rubner, Tomasi & Guibas, IJCV 2000), so by the triangle inequality
//   |EMD(A, B) - EMD(merged A, merged B)| <= displacement(A) + displacement(B),
// and displacement <= eps because every member lies within eps of its leader (the continuity of the EMD under
// moves of at most eps, "Resolving the data ambiguity for periodic crystals", NeurIPS 2022).

/** Rows within this L-infinity distance (Å) of a leader join its group: well above optimiser noise on one atom's row
 * (a few 0.001 Å), well below the gap between rows of different atoms of one molecule (mostly 0.05 Å or more). */
export const GROUP_EPS_ANGSTROM = 0.02;

export interface RowGroups {
  /** Number of groups. */
  count: number;
  /** Group of each row (0..count-1), -1 for rows without weight. */
  of: Int32Array;
  /** Leader of each group: the row (local index) that opened it, in row order. */
  leader: Int32Array;
  /** Largest L-infinity distance (Å) from a member to its leader, per group (at most eps). */
  radius: Float64Array;
  /** Weight of each group, the positive weights normalised to add up to 1. */
  weight: Float64Array;
  /** sum_i w_i |row_i - leader(i)|_inf with normalised weights: EMD(PDD, merged PDD) is at most this. */
  displacement: number;
}

/**
 * Group the rows first..first+count-1 of `rows` (row r at rows[r*k ..]): each row not yet in a group opens one
 * (it is the leader), and every later row within `epsAngstrom` of it (L-infinity) joins. Deterministic: it depends
 * only on the rows, in their order.
 */
export function groupRows(rows: Float64Array, weights: Float64Array, first: number, count: number, k: number, epsAngstrom = GROUP_EPS_ANGSTROM): RowGroups {
  const of = new Int32Array(count).fill(-1);
  const leaders: number[] = [];
  const radii: number[] = [];
  let total = 0;
  for (let r = 0; r < count; r++) {
    const w = weights[first + r];
    if (w > 0) total += w;
  }
  let displacement = 0;
  for (let i = 0; i < count; i++) {
    if (of[i] >= 0 || !(weights[first + i] > 0)) continue;
    const g = leaders.length;
    leaders.push(i);
    of[i] = g;
    let radius = 0;
    const io = (first + i) * k;
    for (let j = i + 1; j < count; j++) {
      if (of[j] >= 0 || !(weights[first + j] > 0)) continue;
      const jo = (first + j) * k;
      let max = 0;
      let t = 0;
      for (; t < k; t++) {
        const d = Math.abs(rows[io + t] - rows[jo + t]);
        if (d > max) {
          max = d;
          if (max > epsAngstrom) break;
        }
      }
      if (t < k) continue;
      of[j] = g;
      if (max > radius) radius = max;
      displacement += (weights[first + j] / total) * max;
    }
    radii.push(radius);
  }
  const weight = new Float64Array(leaders.length);
  for (let i = 0; i < count; i++) if (of[i] >= 0) weight[of[i]] += weights[first + i] / total;
  return { count: leaders.length, of, leader: Int32Array.from(leaders), radius: Float64Array.from(radii), weight, displacement };
}
