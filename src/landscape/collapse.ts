// Duplicate collapse: structures are visited in order of increasing energy (input order without energies,
// ties by input index); each joins the NEAREST already kept structure within the tolerance (EMD, Å), or is
// kept itself. So the kept structure of a group is its lowest-energy member and every member lies within the
// tolerance of it: groups never chain. Structures of different composition never join each other, and an
// optional check (the element-aware comparison) can refuse a pair (common practice for duplicate removal in structure prediction; the
// metric is EMD between PDDs, "Resolving the data ambiguity for periodic crystals", NeurIPS 2022).

export interface CloseEdges {
  /** Pairs (i[t], j[t]) of structure indices with EMD d[t] Å, each pair once, any order. */
  i: Int32Array;
  j: Int32Array;
  d: Float64Array;
}

export interface CollapseResult {
  /** Per structure: index of its kept structure (itself when kept), -1 when not in `order`. */
  keptOf: Int32Array;
  /** Per structure: EMD (Å) to its kept structure (0 for kept ones, NaN when not in `order`). */
  distanceToKept: Float64Array;
  /** Kept structures in visit order (lowest energy first). */
  kept: number[];
  /** Pairs (structure, kept structure, EMD) within the tolerance that `accept` refused, in visit order. */
  refused: Array<[number, number, number]>;
}

export interface CollapseChemistry {
  /**
   * Per structure: its composition class; structures of different classes are never duplicates of each other,
   * whatever their distance (PDD and EMD see geometry only).
   */
  classOf?: Int32Array;
  /**
   * Asked, nearest first, for each kept structure of the same class within the tolerance until it answers
   * true: whether structure s may join kept structure t (the element-aware check). Refused pairs are returned.
   */
  accept?: (s: number, t: number) => boolean;
}

/**
 * Collapse `n` structures. `order` lists the structures taking part, in visit order; `edges` holds every pair
 * within the tolerance (pairs farther apart are ignored whatever they contain). Ties in distance go to the
 * kept structure visited first.
 */
export function collapseDuplicates(
  n: number,
  order: ArrayLike<number>,
  edges: CloseEdges,
  toleranceAngstrom: number,
  chemistry: CollapseChemistry = {},
): CollapseResult {
  const classOf = chemistry.classOf;
  if (classOf && classOf.length !== n) throw new Error(`collapseDuplicates: ${classOf.length} classes for ${n} structures`);
  const sameClass = (a: number, b: number) => !classOf || classOf[a] === classOf[b];
  const m = edges.i.length;
  if (edges.j.length !== m || edges.d.length !== m) throw new Error('collapseDuplicates: edge arrays differ in length');
  // Compressed adjacency lists of the close pairs, both directions.
  const degree = new Int32Array(n + 1);
  for (let t = 0; t < m; t++) {
    if (!(edges.d[t] <= toleranceAngstrom) || !sameClass(edges.i[t], edges.j[t])) continue;
    degree[edges.i[t] + 1]++;
    degree[edges.j[t] + 1]++;
  }
  for (let v = 0; v < n; v++) degree[v + 1] += degree[v];
  const fill = degree.slice(0, n);
  const nbr = new Int32Array(degree[n]);
  const dist = new Float64Array(degree[n]);
  for (let t = 0; t < m; t++) {
    if (!(edges.d[t] <= toleranceAngstrom) || !sameClass(edges.i[t], edges.j[t])) continue;
    const a = edges.i[t];
    const b = edges.j[t];
    nbr[fill[a]] = b;
    dist[fill[a]++] = edges.d[t];
    nbr[fill[b]] = a;
    dist[fill[b]++] = edges.d[t];
  }

  const keptOf = new Int32Array(n).fill(-1);
  const distanceToKept = new Float64Array(n).fill(NaN);
  // Visit rank of each kept structure, to break distance ties towards the one visited first.
  const keptRank = new Int32Array(n).fill(-1);
  const kept: number[] = [];
  const refused: Array<[number, number, number]> = [];
  const accept = chemistry.accept;
  const candidates: Array<[number, number]> = [];
  for (let r = 0; r < order.length; r++) {
    const s = order[r];
    let best = -1;
    let bestD = Infinity;
    if (!accept) {
      for (let e = degree[s]; e < degree[s + 1]; e++) {
        const t = nbr[e];
        if (keptRank[t] < 0) continue; // not visited yet, or a duplicate
        const d = dist[e];
        if (d < bestD || (d === bestD && keptRank[t] < keptRank[best])) {
          best = t;
          bestD = d;
        }
      }
    } else {
      // Kept candidates nearest first (ties to the one visited first); the first one accepted wins.
      candidates.length = 0;
      for (let e = degree[s]; e < degree[s + 1]; e++) if (keptRank[nbr[e]] >= 0) candidates.push([nbr[e], dist[e]]);
      candidates.sort((x, y) => x[1] - y[1] || keptRank[x[0]] - keptRank[y[0]]);
      for (const [t, d] of candidates) {
        if (accept(s, t)) {
          best = t;
          bestD = d;
          break;
        }
        refused.push([s, t, d]);
      }
    }
    if (best >= 0) {
      keptOf[s] = best;
      distanceToKept[s] = bestD;
    } else {
      keptOf[s] = s;
      distanceToKept[s] = 0;
      keptRank[s] = kept.length;
      kept.push(s);
    }
  }
  return { keptOf, distanceToKept, kept, refused };
}

/**
 * Visit order for the collapse: by energy ascending (structures with no energy after all with one), ties and
 * energy-less structures by input index.
 */
export function visitOrder(indices: readonly number[], energy: ReadonlyArray<number | null>): Int32Array {
  const out = Int32Array.from(indices);
  out.sort((a, b) => {
    const ea = energy[a];
    const eb = energy[b];
    if (ea !== null && eb !== null && ea !== eb) return ea - eb;
    if (ea === null && eb !== null) return 1;
    if (ea !== null && eb === null) return -1;
    return a - b;
  });
  return out;
}
