// Exact EMDs already solved in a run, one entry per unordered pair of items, shared by every comparison stage
// (duplicates, neighbours, families, map) so that no pair is solved twice, and saved with the comparisons cache so
// that a re-run with other options solves only what is new. Open addressing with linear probing in typed arrays.

/** Pairs known for a set of queries, as compressed lists: query q's pairs are start[q] .. start[q+1]-1. */
export interface KnownPairs {
  start: Int32Array;
  other: Int32Array;
  distance: Float64Array;
}

export class PairStore {
  private mask = 1023;
  private keyA = new Int32Array(1024).fill(-1);
  private keyB = new Int32Array(1024);
  private value = new Float64Array(1024);
  private count = 0;

  get size(): number {
    return this.count;
  }

  /** The EMD of items a and b (either order), or -1 when not known. */
  get(a: number, b: number): number {
    const lo = a < b ? a : b;
    const hi = a < b ? b : a;
    let h = slot(lo, hi, this.mask);
    for (;;) {
      const ka = this.keyA[h];
      if (ka === -1) return -1;
      if (ka === lo && this.keyB[h] === hi) return this.value[h];
      h = (h + 1) & this.mask;
    }
  }

  set(a: number, b: number, d: number): void {
    if (2 * (this.count + 1) > this.mask + 1) this.grow();
    const lo = a < b ? a : b;
    const hi = a < b ? b : a;
    let h = slot(lo, hi, this.mask);
    while (this.keyA[h] !== -1) {
      if (this.keyA[h] === lo && this.keyB[h] === hi) {
        this.value[h] = d;
        return;
      }
      h = (h + 1) & this.mask;
    }
    this.keyA[h] = lo;
    this.keyB[h] = hi;
    this.value[h] = d;
    this.count++;
  }

  /** Add pairs (i[t], j[t]) with distances d[t]. */
  addAll(i: ArrayLike<number>, j: ArrayLike<number>, d: ArrayLike<number>): void {
    for (let t = 0; t < i.length; t++) this.set(i[t], j[t], d[t]);
  }

  /** Every pair, smaller index first, sorted by (i, j): the same arrays for the same contents. */
  toArrays(): { i: Int32Array; j: Int32Array; d: Float64Array } {
    const idx: number[] = [];
    for (let h = 0; h <= this.mask; h++) if (this.keyA[h] !== -1) idx.push(h);
    idx.sort((p, q) => this.keyA[p] - this.keyA[q] || this.keyB[p] - this.keyB[q]);
    return {
      i: Int32Array.from(idx, (h) => this.keyA[h]),
      j: Int32Array.from(idx, (h) => this.keyB[h]),
      d: Float64Array.from(idx, (h) => this.value[h]),
    };
  }

  /**
   * The pairs of each of `queries` (item indices) with any item for which `keep(other)` holds, as compressed lists
   * in query order, to hand to a worker job with the queries.
   */
  knownFor(queries: ArrayLike<number>, keep: (other: number) => boolean = () => true): KnownPairs {
    const where = new Map<number, number>();
    for (let q = 0; q < queries.length; q++) where.set(queries[q], q);
    const lists: Array<Array<[number, number]>> = Array.from({ length: queries.length }, () => []);
    for (let h = 0; h <= this.mask; h++) {
      const a = this.keyA[h];
      if (a === -1) continue;
      const b = this.keyB[h];
      const qa = where.get(a);
      const qb = where.get(b);
      if (qa !== undefined && keep(b)) lists[qa].push([b, this.value[h]]);
      if (qb !== undefined && keep(a)) lists[qb].push([a, this.value[h]]);
    }
    const start = new Int32Array(queries.length + 1);
    for (let q = 0; q < queries.length; q++) start[q + 1] = start[q] + lists[q].length;
    const other = new Int32Array(start[queries.length]);
    const distance = new Float64Array(start[queries.length]);
    lists.forEach((l, q) => {
      l.sort((x, y) => x[0] - y[0]);
      l.forEach(([o, d], t) => {
        other[start[q] + t] = o;
        distance[start[q] + t] = d;
      });
    });
    return { start, other, distance };
  }

  private grow(): void {
    const oldA = this.keyA;
    const oldB = this.keyB;
    const oldV = this.value;
    const cap = (this.mask + 1) * 2;
    this.mask = cap - 1;
    this.keyA = new Int32Array(cap).fill(-1);
    this.keyB = new Int32Array(cap);
    this.value = new Float64Array(cap);
    this.count = 0;
    for (let h = 0; h < oldA.length; h++) if (oldA[h] !== -1) this.set(oldA[h], oldB[h], oldV[h]);
  }
}

function slot(a: number, b: number, mask: number): number {
  return ((Math.imul(a, 0x9e3779b1) ^ Math.imul(b + 0x632be5ab, 0x85ebca77)) >>> 0) & mask;
}
