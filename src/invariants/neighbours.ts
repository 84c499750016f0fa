// Exact k nearest neighbours of motif points in an infinite periodic point set (1, 2 or 3 dimensions).
//
// For a query point q the candidates are all points p + n0·b0 + n1·b1 + n2·b2 (p a motif point, n an
// integer vector, b the reduced basis), q itself excluded and its own translates included.
//
// 1. Cloud. Around the centre c of the (wrapped) motif, every candidate within radius Rc of c is
//    listed once per set, by the Fincke-Pohst method (U. Fincke & M. Pohst, "Improved methods for
//    calculating vectors of short length in a lattice", Math. Comp. 44, 1985): orthogonalise the
//    basis in the order b2, b1, b0 and write an offset in that orthonormal frame; its e0-coordinate
//    depends on n0 only, its e1-coordinate on n0 and n1, its e2-coordinate on all three, so
//    |offset| <= Rc gives an interval for n0, then one for n1, then one for n2. Cloud points are
//    bucketed by distance from c into shells.
// 2. Query. For query q at distance dq from c, every candidate within R of q lies within R + dq of c
//    (triangle inequality), so scanning the shells up to R + dq finds them all, provided
//    R + dq <= Rc. Those within R are kept and sorted.
//
// Stopping rule (why the result is exact): a pass with radius R and R + dq <= Rc sees every candidate
// within R of q. When at least k are within R, the k smallest distances seen are the k nearest
// overall, because every candidate not seen is farther than R. When fewer than k are, R grows (by the
// shortfall in point count, at least 25%) and, if R + dq would pass Rc, the cloud is rebuilt with a
// larger Rc. This ends because a ball of large enough radius holds k candidates.
//
// The basis is LLL-reduced first (src/geometry/reduce.ts) so that the cell is compact and the cloud
// small for any input cell; reduction does not change the lattice, so it changes only the running time.
import type { PeriodicPointSet } from '../types.js';
import { reduceBasis } from '../geometry/reduce.js';

/** Everything the search needs about a set, prepared once: padded to 3D, reduced, frame built. */
export interface PreparedSet {
  /** Original dimension (1, 2 or 3). */
  dim: number;
  m: number;
  /** 3x3 reduced basis (padded with unit vectors for dim < 3), rows are lattice vectors. */
  basis: Float64Array;
  /**
   * Fincke-Pohst frame data: [L0, L1, L2, b0·e1, b0·e2, b1·e2] with L_i the lengths of the
   * orthogonalised vectors (L0 is the cell width across b1 and b2) and e_i their unit vectors.
   */
  frame: Float64Array;
  /** m*3 motif coordinates in the orthonormal frame (e0, e1, e2). */
  proj: Float64Array;
  /** Cell volume (length, area or volume for dim 1, 2, 3). */
  volume: number;
}

export interface NeighbourOptions {
  /** Starting search radius in Å; by default estimated from the point density. Exposed for tests of the stopping rule. */
  initialRadiusAngstrom?: number;
}

/** Reduce the basis and express the motif in the search frame. Throws with a clear message on unusable input. */
export function prepareSet(set: PeriodicPointSet): PreparedSet {
  const dim = set.dim;
  if (!(dim === 1 || dim === 2 || dim === 3)) throw new Error(`a periodic set must have dimension 1, 2 or 3, not ${dim}`);
  const m = set.motif.length / dim;
  if (!Number.isInteger(m) || m < 1) throw new Error(`a periodic set needs at least one motif point (motif has ${set.motif.length} numbers for dimension ${dim})`);
  for (let i = 0; i < set.motif.length; i++) {
    if (!Number.isFinite(set.motif[i])) throw new Error(`motif point ${Math.floor(i / dim)} has a coordinate that is not a finite number`);
  }
  const red = reduceBasis(set.basis, dim);
  // Pad to 3D: extra axes are unit vectors orthogonal to the set, never translated along (their
  // intervals are forced to n = 0 in the search). Real axes come first, so e0 is always real.
  const basis = new Float64Array(9);
  for (let r = 0; r < 3; r++) {
    for (let c = 0; c < 3; c++) basis[r * 3 + c] = r < dim && c < dim ? red.basis[r * dim + c] : r === c ? 1 : 0;
  }
  // Orthonormal frame in the order b2, b1, b0 (Gram-Schmidt).
  const e = new Float64Array(9);
  const len = new Float64Array(3);
  for (let r = 2; r >= 0; r--) {
    let x = basis[r * 3], y = basis[r * 3 + 1], z = basis[r * 3 + 2];
    for (let t = 2; t > r; t--) {
      const d = x * e[t * 3] + y * e[t * 3 + 1] + z * e[t * 3 + 2];
      x -= d * e[t * 3];
      y -= d * e[t * 3 + 1];
      z -= d * e[t * 3 + 2];
    }
    const l = Math.sqrt(x * x + y * y + z * z);
    len[r] = l;
    e[r * 3] = x / l;
    e[r * 3 + 1] = y / l;
    e[r * 3 + 2] = z / l;
  }
  const dotBE = (b: number, f: number) => basis[b * 3] * e[f * 3] + basis[b * 3 + 1] * e[f * 3 + 1] + basis[b * 3 + 2] * e[f * 3 + 2];
  const frame = Float64Array.from([len[0], len[1], len[2], dotBE(0, 1), dotBE(0, 2), dotBE(1, 2)]);
  const proj = new Float64Array(m * 3);
  for (let p = 0; p < m; p++) {
    const x = set.motif[p * dim];
    const y = dim > 1 ? set.motif[p * dim + 1] : 0;
    const z = dim > 2 ? set.motif[p * dim + 2] : 0;
    for (let f = 0; f < 3; f++) proj[p * 3 + f] = x * e[f * 3] + y * e[f * 3 + 1] + z * e[f * 3 + 2];
  }
  // Wrap each point into the reduced cell along the frame so that offsets stay short (intervals
  // near zero): subtract whole lattice vectors, outermost axis first.
  for (let p = 0; p < m; p++) {
    for (let r = 0; r < dim; r++) {
      // Coordinate along e_r of b_r is L_r; b_r has no part along e_s for s < r.
      const n = Math.floor(proj[p * 3 + r] / len[r]);
      if (n === 0) continue;
      proj[p * 3 + r] -= n * len[r];
      if (r === 0) {
        proj[p * 3 + 1] -= n * frame[3];
        proj[p * 3 + 2] -= n * frame[4];
      } else if (r === 1) {
        proj[p * 3 + 2] -= n * frame[5];
      }
    }
  }
  const volume = len[0] * len[1] * len[2];
  return { dim, m, basis, frame, proj, volume };
}

/** Volume of the unit ball in dimension 1, 2, 3. */
const UNIT_BALL = [0, 2, Math.PI, (4 * Math.PI) / 3];

/**
 * Distances (Å) from each query motif point to its k nearest neighbours in the infinite periodic set,
 * ascending, as a queries.length*k row-major array. `queries` are motif indices (default: all points).
 */
export function nearestNeighbourDistances(
  set: PeriodicPointSet | PreparedSet,
  k: number,
  queries?: Int32Array,
  options: NeighbourOptions = {},
): Float64Array {
  if (!(Number.isInteger(k) && k >= 1)) throw new Error(`the number of neighbours k must be a positive integer, not ${k}`);
  const prep = 'frame' in set ? set : prepareSet(set);
  const m = prep.m;
  let qs = queries;
  if (!qs) {
    qs = new Int32Array(m);
    for (let i = 0; i < m; i++) qs[i] = i;
  }
  for (let i = 0; i < qs.length; i++) {
    if (!(qs[i] >= 0 && qs[i] < m)) throw new Error(`query index ${qs[i]} is outside the motif (0..${m - 1})`);
  }
  // Radius whose ball holds about k+1 points at this density, with a margin so one pass usually suffices.
  const estimate = 1.12 * Math.pow(((k + 1) * prep.volume) / (m * UNIT_BALL[prep.dim]), 1 / prep.dim);
  const r0 = options.initialRadiusAngstrom ?? estimate;
  if (!(r0 > 0)) throw new Error('the initial search radius must be positive');

  const out = new Float64Array(qs.length * k);
  const { frame, proj, dim } = prep;
  const nq = qs.length;
  // Query positions: each query moved by the lattice vector that brings it next to the first query
  // (nearest-plane rounding in the triangular frame), so the queries form a compact cluster and an
  // asymmetric unit cut by the cell faces comes back whole. Distances do not change under translation.
  const qpos = new Float64Array(nq * 3);
  for (let qi = 0; qi < nq; qi++) {
    const q = qs[qi];
    let x = proj[q * 3], y = proj[q * 3 + 1], z = proj[q * 3 + 2];
    if (qi > 0) {
      const n0 = Math.round((x - qpos[0]) / frame[0]);
      x -= n0 * frame[0];
      y -= n0 * frame[3];
      z -= n0 * frame[4];
      if (dim > 1) {
        const n1 = Math.round((y - qpos[1]) / frame[1]);
        y -= n1 * frame[1];
        z -= n1 * frame[5];
      }
      if (dim > 2) z -= Math.round((z - qpos[2]) / frame[2]) * frame[2];
    }
    qpos[qi * 3] = x;
    qpos[qi * 3 + 1] = y;
    qpos[qi * 3 + 2] = z;
  }
  // Groups: a cluster much wider than the search radius is cut into boxes about r0 wide, each with
  // its own cloud, so that no cloud is much wider than r0 plus its box.
  const lo = [Infinity, Infinity, Infinity];
  const hi = [-Infinity, -Infinity, -Infinity];
  for (let qi = 0; qi < nq; qi++) {
    for (let c = 0; c < 3; c++) {
      lo[c] = Math.min(lo[c], qpos[qi * 3 + c]);
      hi[c] = Math.max(hi[c], qpos[qi * 3 + c]);
    }
  }
  const cuts = [1, 1, 1];
  for (let c = 0; c < 3; c++) cuts[c] = Math.max(1, Math.min(4, Math.floor((hi[c] - lo[c]) / r0)));
  const groupOf = new Int32Array(nq);
  const groups = cuts[0] * cuts[1] * cuts[2];
  for (let qi = 0; qi < nq; qi++) {
    let g = 0;
    for (let c = 0; c < 3; c++) {
      const w = (hi[c] - lo[c]) / cuts[c];
      const cell = w > 0 ? Math.min(cuts[c] - 1, Math.floor((qpos[qi * 3 + c] - lo[c]) / w)) : 0;
      g = g * cuts[c] + cell;
    }
    groupOf[qi] = g;
  }
  // A translate of the query itself is at least the shortest lattice vector away, which is at least the
  // shortest orthogonalised length; a cloud entry of the query's own motif point closer than a tiny
  // fraction of that is the query itself.
  let shortest = frame[0];
  if (dim > 1) shortest = Math.min(shortest, frame[1]);
  if (dim > 2) shortest = Math.min(shortest, frame[2]);
  const selfSq = (1e-6 * shortest) ** 2;

  // Squared distances of the candidates within R; grown when a pass sees more, never per candidate.
  let seen = new Float64Array(Math.max(64, 2 * k));
  let scratch = sortScratch(seen.length);
  const members = new Int32Array(nq);
  for (let g = 0; g < groups; g++) {
    let size = 0;
    for (let qi = 0; qi < nq; qi++) if (groupOf[qi] === g) members[size++] = qi;
    if (size === 0) continue;
    // The group's centre (middle of its bounding box) and its farthest query from it.
    const glo = [Infinity, Infinity, Infinity];
    const ghi = [-Infinity, -Infinity, -Infinity];
    for (let t = 0; t < size; t++) {
      for (let c = 0; c < 3; c++) {
        glo[c] = Math.min(glo[c], qpos[members[t] * 3 + c]);
        ghi[c] = Math.max(ghi[c], qpos[members[t] * 3 + c]);
      }
    }
    const c0 = (glo[0] + ghi[0]) / 2, c1 = (glo[1] + ghi[1]) / 2, c2 = (glo[2] + ghi[2]) / 2;
    let spread = 0;
    for (let t = 0; t < size; t++) {
      const qi = members[t];
      spread = Math.max(spread, Math.hypot(qpos[qi * 3] - c0, qpos[qi * 3 + 1] - c1, qpos[qi * 3 + 2] - c2));
    }
    let cloud = buildCloud(prep, c0, c1, c2, r0 + spread);
    for (let t = 0; t < size; t++) {
      const qi = members[t];
      const q = qs[qi];
      const qx = qpos[qi * 3] - c0, qy = qpos[qi * 3 + 1] - c1, qz = qpos[qi * 3 + 2] - c2;
      const dq = Math.hypot(qx, qy, qz);
      let radius = r0;
      let count = 0;
      for (;;) {
        if (radius + dq > cloud.radius) cloud = buildCloud(prep, c0, c1, c2, (radius + spread) * 1.0001);
        count = scanCloud(cloud, q, qx, qy, qz, radius, dq, selfSq, seen);
        if (count > seen.length) {
          seen = new Float64Array(2 * count);
          continue; // same radius again, now with room for every candidate
        }
        if (count >= k) break;
        const grow = count > 0 ? Math.pow((k + 1) / count, 1 / dim) : 2;
        radius *= Math.max(1.25, grow);
      }
      if (scratch.keys.length < count) scratch = sortScratch(seen.length);
      smallestAscending(seen, count, radius, dim, k, out, qi * k, scratch);
    }
  }
  return out;
}

interface SortScratch {
  keys: Int32Array;
  starts: Int32Array;
  sorted: Float64Array;
}

function sortScratch(n: number): SortScratch {
  return { keys: new Int32Array(n), starts: new Int32Array(n + 1), sorted: new Float64Array(n) };
}

/**
 * Write the square roots of the k smallest of `count` squared distances (all within `radius`),
 * ascending, to out[base..base+k). Candidates fill the ball about evenly, so bucketing by the
 * fraction of the ball's volume inside each distance leaves about one per bucket, and an insertion
 * sort of the bucketed order finishes the job in about linear time.
 */
function smallestAscending(
  seen: Float64Array,
  count: number,
  radius: number,
  dim: number,
  k: number,
  out: Float64Array,
  base: number,
  scratch: SortScratch,
): void {
  const { keys, starts, sorted } = scratch;
  const rsq = radius * radius * (1 + 1e-9);
  for (let i = 0; i <= count; i++) starts[i] = 0;
  for (let i = 0; i < count; i++) {
    const f0 = seen[i] / rsq;
    const f = dim === 3 ? f0 * Math.sqrt(f0) : dim === 2 ? f0 : Math.sqrt(f0);
    const key = Math.min(count - 1, Math.floor(f * count));
    keys[i] = key;
    starts[key + 1]++;
  }
  for (let b = 0; b < count; b++) starts[b + 1] += starts[b];
  for (let i = 0; i < count; i++) sorted[starts[keys[i]]++] = seen[i];
  insertionSort(sorted, count);
  for (let j = 0; j < k; j++) out[base + j] = Math.sqrt(sorted[j]);
}

/** Sort the first n entries ascending (fast on the nearly sorted input it gets). */
function insertionSort(a: Float64Array, n: number): void {
  for (let i = 1; i < n; i++) {
    const v = a[i];
    let j = i - 1;
    while (j >= 0 && a[j] > v) {
      a[j + 1] = a[j];
      j--;
    }
    a[j + 1] = v;
  }
}

/** Number of distance shells the cloud is bucketed into. */
const SHELLS = 64;

/** Every candidate point within `radius` of a centre, in frame coordinates, bucketed by distance from the centre. */
interface Cloud {
  radius: number;
  /** n*3 coordinates relative to the centre, shell by shell. */
  xyz: Float64Array;
  /** SHELLS+1 offsets: shell s holds points [start[s], start[s+1]), distances in [radius*s/SHELLS, radius*(s+1)/SHELLS]. */
  start: Int32Array;
  /** Motif point each cloud point is a translate of. */
  owner: Int32Array;
}

function buildCloud(prep: PreparedSet, c0: number, c1: number, c2: number, radius: number): Cloud {
  const m = prep.m;
  // Collect (relative coordinates, shell, motif point, untranslated?) into growable scratch arrays.
  let cap = 1024;
  let raw = new Float64Array(cap * 3);
  let shell = new Int32Array(cap);
  let ownerRaw = new Int32Array(cap);
  let n = 0;
  for (;;) {
    n = enumerateBall(prep, c0, c1, c2, radius, raw, shell, ownerRaw, cap);
    if (n <= cap) break;
    cap = 2 * n;
    raw = new Float64Array(cap * 3);
    shell = new Int32Array(cap);
    ownerRaw = new Int32Array(cap);
  }
  // Counting sort by shell.
  const start = new Int32Array(SHELLS + 1);
  for (let i = 0; i < n; i++) start[shell[i] + 1]++;
  for (let s = 0; s < SHELLS; s++) start[s + 1] += start[s];
  const fill = start.slice(0, SHELLS);
  const xyz = new Float64Array(n * 3);
  const owner = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const at = fill[shell[i]]++;
    xyz[at * 3] = raw[i * 3];
    xyz[at * 3 + 1] = raw[i * 3 + 1];
    xyz[at * 3 + 2] = raw[i * 3 + 2];
    owner[at] = ownerRaw[i];
  }
  return { radius, xyz, start, owner };
}

/**
 * Fincke-Pohst enumeration of every candidate within `radius` of the centre (c0, c1, c2). Writes at
 * most `cap` of them and returns how many there are (the caller retries with more room if needed).
 */
function enumerateBall(
  prep: PreparedSet,
  c0: number,
  c1: number,
  c2: number,
  radius: number,
  raw: Float64Array,
  shell: Int32Array,
  owner: Int32Array,
  cap: number,
): number {
  const { frame, proj, m, dim } = prep;
  const L0 = frame[0], L1 = frame[1], L2 = frame[2];
  const b0e1 = frame[3], b0e2 = frame[4], b1e2 = frame[5];
  const rr = radius;
  const rsq = rr * rr;
  const shellScale = SHELLS / radius;
  const use1 = dim > 1;
  const use2 = dim > 2;
  let count = 0;
  for (let p = 0; p < m; p++) {
    const a0 = proj[p * 3] - c0;
    const a1base = proj[p * 3 + 1] - c1;
    const a2base = proj[p * 3 + 2] - c2;
    const lo0 = Math.ceil((-rr - a0) / L0), hi0 = Math.floor((rr - a0) / L0);
    for (let n0 = lo0; n0 <= hi0; n0++) {
      const x0 = a0 + n0 * L0;
      const left1 = rsq - x0 * x0;
      if (left1 < 0) continue;
      const a1 = a1base + n0 * b0e1;
      const a2n0 = a2base + n0 * b0e2;
      let lo1 = 0, hi1 = 0;
      if (use1) {
        const r1 = Math.sqrt(left1);
        lo1 = Math.ceil((-r1 - a1) / L1);
        hi1 = Math.floor((r1 - a1) / L1);
      }
      for (let n1 = lo1; n1 <= hi1; n1++) {
        const x1 = a1 + n1 * L1;
        const left2 = left1 - x1 * x1;
        if (left2 < 0) continue;
        const a2 = a2n0 + n1 * b1e2;
        let lo2 = 0, hi2 = 0;
        if (use2) {
          const r2 = Math.sqrt(left2);
          lo2 = Math.ceil((-r2 - a2) / L2);
          hi2 = Math.floor((r2 - a2) / L2);
        }
        for (let n2 = lo2; n2 <= hi2; n2++) {
          const x2 = a2 + n2 * L2;
          const dsq = x0 * x0 + x1 * x1 + x2 * x2;
          if (dsq > rsq) continue;
          if (count < cap) {
            raw[count * 3] = x0;
            raw[count * 3 + 1] = x1;
            raw[count * 3 + 2] = x2;
            shell[count] = Math.min(SHELLS - 1, Math.floor(Math.sqrt(dsq) * shellScale));
            owner[count] = p;
          }
          count++;
        }
      }
    }
  }
  return count;
}

/**
 * Squared distances from query q (motif point q at (qx, qy, qz) relative to the centre) to every cloud
 * point within `radius` of it except the query itself, written into `seen`; the scan covers the
 * shells that can hold such points (distance from the centre up to radius + dq). Returns how many
 * there are (only the first seen.length are written).
 */
function scanCloud(cloud: Cloud, q: number, qx: number, qy: number, qz: number, radius: number, dq: number, selfSq: number, seen: Float64Array): number {
  const xyz = cloud.xyz;
  const owner = cloud.owner;
  const capacity = seen.length;
  const reach = radius + dq;
  // One shell of slack so that rounding at a shell boundary never drops a point.
  const lastShell = Math.min(SHELLS - 1, Math.floor((reach / cloud.radius) * SHELLS) + 1);
  const end = cloud.start[lastShell + 1];
  // Widen by a hair so that rounding never drops a candidate at distance exactly `radius`.
  const rr = radius * (1 + 1e-12) + 1e-12;
  const rsq = rr * rr;
  let selfFound = false;
  let count = 0;
  for (let i = 0; i < end; i++) {
    const dx = xyz[i * 3] - qx;
    const dy = xyz[i * 3 + 1] - qy;
    const dz = xyz[i * 3 + 2] - qz;
    const dsq = dx * dx + dy * dy + dz * dz;
    if (dsq <= rsq) {
      if (dsq <= selfSq && !selfFound && owner[i] === q) {
        selfFound = true; // the query point itself
        continue;
      }
      if (count < capacity) seen[count] = dsq;
      count++;
    }
  }
  if (!selfFound) throw new Error('internal error: the query point is missing from its own neighbour cloud');
  return count;
}
