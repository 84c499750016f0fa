// Metric map: a 2-D picture of a set of structures whose plotted distances follow a given metric (EMD).
//
// Method: classical multidimensional scaling (Torgerson, "Multidimensional scaling: I. Theory and
// method", Psychometrika 1952) gives a deterministic start; metric stress majorisation (SMACOF: de
// Leeuw, "Applications of convex analysis to multidimensional scaling", 1977; Borg & Groenen, Modern
// Multidimensional Scaling, 2nd ed., Springer 2005, ch. 8) then lowers the raw stress
// sum_{i<j} (d_ij(X) - delta_ij)^2 with unit weights. Reported quality: Kruskal's stress-1 (Kruskal,
// Psychometrika 1964; Borg & Groenen 2005, ch. 3) and trustworthiness (Venna & Kaski, ICANN 2001),
// see ./trustworthiness.ts.
//
// Everything is deterministic: the eigenvectors come from a Lanczos iteration started from a fixed
// vector, and each axis is oriented so that its largest-magnitude coordinate is positive.
import { trustworthiness } from './trustworthiness.js';

export interface EmbedOptions {
  /** Cap on SMACOF iterations; default from a work budget (300 up to n of about 1,400, then fewer, at least 20). */
  maxIterations?: number;
  /** Stop when one iteration lowers the raw stress by less than this fraction (default 1e-7). */
  relativeTolerance?: number;
  /** Neighbourhood size of the reported trustworthiness (default 10, capped below n/2). */
  neighbours?: number;
}

export interface Embedding2d {
  method: string;
  /** One [x, y] per point, in the metric's unit. */
  coords: Array<[number, number]>;
  quality: Array<{ name: string; value: number }>;
}

export const EMBED_METHOD = 'classical MDS (Torgerson) refined by SMACOF stress majorisation';

/** Pair visits (n^2 per iteration) the default iteration cap allows: about 65 iterations at n = 3,000. */
const PAIR_BUDGET = 6e8;

/**
 * 2-D embedding of n points from their symmetric n*n distance matrix (row-major).
 * n = 0 gives no coordinates; n = 1 the origin. A point at distance 0 from an earlier point is put
 * exactly on it (the embedding is computed for the distinct points, each counted once); stress and
 * trustworthiness are reported for all n points.
 * Throws on a matrix of the wrong size or with negative, NaN or infinite entries.
 */
export function embed2d(dist: Float64Array, n: number, opts: EmbedOptions = {}): Embedding2d {
  checkMatrix(dist, n, 'embed2d');
  if (n === 0) return { method: EMBED_METHOD, coords: [], quality: [] };
  // points at distance 0 from an earlier point are placed on it: embed one representative of each
  const { reps, repOf } = distinctPoints(dist, n);
  const m = reps.length;
  const sub = m === n ? dist : subMatrix(dist, n, reps);
  const init = classicalMds(sub, m);
  const maxIterations = opts.maxIterations ?? Math.max(20, Math.min(300, Math.floor(PAIR_BUDGET / Math.max(1, m * m))));
  const refined = smacof(sub, m, init, { maxIterations, relativeTolerance: opts.relativeTolerance ?? 1e-7 });
  orientAxes(refined.coords, m);
  const x = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) {
    x[2 * i] = refined.coords[2 * repOf[i]];
    x[2 * i + 1] = refined.coords[2 * repOf[i] + 1];
  }
  const coords: Array<[number, number]> = new Array(n);
  for (let i = 0; i < n; i++) coords[i] = [x[2 * i], x[2 * i + 1]];
  const quality = [{ name: 'Kruskal stress-1', value: kruskalStress1(dist, n, x) }];
  const k = Math.min(opts.neighbours ?? 10, Math.ceil(n / 2) - 1);
  if (k >= 1) quality.push({ name: `trustworthiness@${k}`, value: trustworthiness(dist, n, x, k) });
  return { method: EMBED_METHOD, coords, quality };
}

/**
 * Classical (Torgerson) scaling to 2-D: the top two eigenpairs of B = -1/2 J D^2 J, coordinates
 * sqrt(lambda) * eigenvector (0 where lambda <= 0). Returns n*2 coordinates, centred.
 */
export function classicalMds(dist: Float64Array, n: number): Float64Array {
  const x = new Float64Array(2 * n);
  if (n < 2) return x;
  const { values, vectors } = classicalEigen(dist, n);
  for (let c = 0; c < 2; c++) {
    const scale = values[c] > 0 ? Math.sqrt(values[c]) : 0;
    for (let i = 0; i < n; i++) x[2 * i + c] = scale * vectors[c * n + i];
  }
  return x;
}

/** The two largest eigenvalues of B = -1/2 J D^2 J and their unit eigenvectors (2*n), without forming B. */
export function classicalEigen(dist: Float64Array, n: number): { values: Float64Array; vectors: Float64Array } {
  // row means of the squared distances and their grand mean
  const rowMean = new Float64Array(n);
  let grand = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    const o = i * n;
    for (let j = 0; j < n; j++) s += dist[o + j] * dist[o + j];
    rowMean[i] = s / n;
    grand += s;
  }
  grand /= n * n;
  // B v = -1/2 (D^2 v - r (1.v) - 1 (r.v) + g 1 (1.v)) with r the row means, g the grand mean
  const applyB = (v: Float64Array, out: Float64Array) => {
    let sumV = 0;
    let dotRow = 0;
    for (let i = 0; i < n; i++) {
      sumV += v[i];
      dotRow += rowMean[i] * v[i];
    }
    for (let i = 0; i < n; i++) {
      const o = i * n;
      let s = 0;
      for (let j = 0; j < n; j++) {
        const d = dist[o + j];
        s += d * d * v[j];
      }
      out[i] = -0.5 * (s - rowMean[i] * sumV - dotRow + grand * sumV);
    }
  };
  return topEigenpairs(applyB, n, 2);
}

/**
 * SMACOF with unit weights from the start `init` (n*2): repeated Guttman transforms
 * X <- (1/n) B(X) X, each of which never raises the raw stress (Borg & Groenen 2005, ch. 8).
 */
export function smacof(
  dist: Float64Array,
  n: number,
  init: Float64Array,
  opts: { maxIterations: number; relativeTolerance: number },
): { coords: Float64Array; iterations: number; rawStress: number } {
  let x = Float64Array.from(init);
  if (n < 3) return { coords: x, iterations: 0, rawStress: rawStress(dist, n, x) };
  let next = new Float64Array(2 * n);
  // the metric's scale, to recognise a perfect fit
  let scale = 0;
  for (let t = 0; t < dist.length; t++) scale += dist[t] * dist[t];
  scale /= 2;
  let previous = Infinity;
  let iterations = 0;
  while (iterations < opts.maxIterations) {
    next.fill(0);
    // one pass over the pairs: the raw stress of the current X and its Guttman transform
    // x_i <- (1/n) sum_j (delta_ij / d_ij(X)) (x_i - x_j)
    let stress = 0;
    for (let i = 0; i < n; i++) {
      const xi = x[2 * i];
      const yi = x[2 * i + 1];
      const o = i * n;
      let ax = 0;
      let ay = 0;
      for (let j = i + 1; j < n; j++) {
        const dx = xi - x[2 * j];
        const dy = yi - x[2 * j + 1];
        const dij = Math.sqrt(dx * dx + dy * dy);
        const delta = dist[o + j];
        const r = dij - delta;
        stress += r * r;
        if (dij > 0) {
          const b = delta / dij;
          ax += b * dx;
          ay += b * dy;
          next[2 * j] -= b * dx;
          next[2 * j + 1] -= b * dy;
        }
      }
      next[2 * i] += ax;
      next[2 * i + 1] += ay;
    }
    // stop at a perfect fit or when the last transform gained too little; X is then kept as it is
    if (stress <= 1e-24 * scale) break;
    if (previous !== Infinity && previous - stress <= opts.relativeTolerance * previous) break;
    previous = stress;
    for (let t = 0; t < 2 * n; t++) next[t] /= n;
    const swap = x;
    x = next;
    next = swap;
    iterations++;
  }
  return { coords: x, iterations, rawStress: rawStress(dist, n, x) };
}

/** Raw stress sum_{i<j} (d_ij(X) - delta_ij)^2 of 2-D coordinates x (n*2). */
export function rawStress(dist: Float64Array, n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const o = i * n;
    for (let j = i + 1; j < n; j++) {
      const dx = x[2 * i] - x[2 * j];
      const dy = x[2 * i + 1] - x[2 * j + 1];
      const r = Math.sqrt(dx * dx + dy * dy) - dist[o + j];
      s += r * r;
    }
  }
  return s;
}

/**
 * Kruskal's stress-1: sqrt( sum_{i<j} (d_ij(X) - delta_ij)^2 / sum_{i<j} d_ij(X)^2 ), with d_ij(X)
 * the plotted distances (Kruskal, Psychometrika 1964; Borg & Groenen 2005, ch. 3). 0 for a perfect
 * fit and when every plotted distance is 0 and so is every target.
 */
export function kruskalStress1(dist: Float64Array, n: number, x: Float64Array): number {
  let num = 0;
  let den = 0;
  for (let i = 0; i < n; i++) {
    const o = i * n;
    for (let j = i + 1; j < n; j++) {
      const dx = x[2 * i] - x[2 * j];
      const dy = x[2 * i + 1] - x[2 * j + 1];
      const d2 = dx * dx + dy * dy;
      const r = Math.sqrt(d2) - dist[o + j];
      num += r * r;
      den += d2;
    }
  }
  if (den === 0) return num === 0 ? 0 : Infinity;
  return Math.sqrt(num / den);
}

// ---------------------------------------------------------------------------------------------
// helpers

/** One representative (the first index) per group of points at distance 0 from it; repOf gives the group. */
function distinctPoints(dist: Float64Array, n: number): { reps: number[]; repOf: Int32Array } {
  const repOf = new Int32Array(n);
  const reps: number[] = [];
  for (let i = 0; i < n; i++) {
    let found = -1;
    for (let r = 0; r < reps.length && found < 0; r++) if (dist[i * n + reps[r]] === 0) found = r;
    if (found < 0) {
      found = reps.length;
      reps.push(i);
    }
    repOf[i] = found;
  }
  return { reps, repOf };
}

function subMatrix(dist: Float64Array, n: number, keep: number[]): Float64Array {
  const m = keep.length;
  const out = new Float64Array(m * m);
  for (let a = 0; a < m; a++) for (let b = 0; b < m; b++) out[a * m + b] = dist[keep[a] * n + keep[b]];
  return out;
}

export function checkMatrix(dist: Float64Array, n: number, who: string): void {
  if (!Number.isInteger(n) || n < 0) throw new Error(`${who}: point count must be a non-negative integer, got ${n}`);
  if (dist.length !== n * n) throw new Error(`${who}: distance matrix has ${dist.length} entries, expected ${n}*${n}`);
  for (let t = 0; t < dist.length; t++) {
    const v = dist[t];
    if (!(v >= 0) || v === Infinity) throw new Error(`${who}: distance (${Math.floor(t / n)}, ${t % n}) is ${v}; distances must be finite and >= 0`);
  }
}

/** Flip each axis so that its largest-magnitude coordinate is positive (a fixed orientation). */
export function orientAxes(x: Float64Array, n: number): void {
  for (let c = 0; c < 2; c++) {
    let best = 0;
    for (let i = 0; i < n; i++) if (Math.abs(x[2 * i + c]) > Math.abs(best) + 1e-12 * Math.abs(best)) best = x[2 * i + c];
    if (best < 0) for (let i = 0; i < n; i++) x[2 * i + c] = -x[2 * i + c];
  }
}

/**
 * The `count` largest (algebraic) eigenvalues and unit eigenvectors (count*n, row per vector) of a
 * symmetric operator, by the Lanczos iteration with full reorthogonalisation (Golub & Van Loan,
 * Matrix Computations, 4th ed. 2013, ch. 10) from a fixed start vector; the small tridiagonal
 * problem is solved by cyclic Jacobi rotations (ibid., ch. 8).
 */
export function topEigenpairs(apply: (v: Float64Array, out: Float64Array) => void, n: number, count: number): { values: Float64Array; vectors: Float64Array } {
  const maxSteps = Math.min(n, 120);
  const basis: Float64Array[] = [];
  const alpha: number[] = [];
  const beta: number[] = [];
  // fixed start vector with no special structure (a hashed sequence), unit length
  let q = new Float64Array(n);
  let state = 0x9e3779b9;
  for (let i = 0; i < n; i++) {
    state = (Math.imul(state ^ (state >>> 16), 0x85ebca6b) + 0x6b43a5f3) >>> 0;
    q[i] = state / 4294967296 - 0.5;
  }
  normalise(q);
  const w = new Float64Array(n);
  let ritz: { values: Float64Array; vectors: Float64Array } = { values: new Float64Array(0), vectors: new Float64Array(0) };
  let norm = 0;
  for (let step = 0; step < maxSteps; step++) {
    basis.push(q);
    apply(q, w);
    const a = dot(q, w);
    alpha.push(a);
    // orthogonalise against the whole basis twice (full reorthogonalisation keeps Ritz pairs clean)
    for (let pass = 0; pass < 2; pass++) {
      for (const b of basis) {
        const c = dot(b, w);
        for (let i = 0; i < n; i++) w[i] -= c * b[i];
      }
    }
    const bNorm = Math.sqrt(dot(w, w));
    norm = Math.max(norm, Math.abs(a) + bNorm);
    const m = basis.length;
    const exhausted = bNorm <= 1e-12 * Math.max(norm, 1e-300) || m === maxSteps;
    if (exhausted || (m >= count + 2 && m % 4 === 0)) {
      ritz = tridiagonalEigen(alpha, beta, m);
      // converged when the residual |beta_m * last component| of each wanted Ritz pair is tiny
      let converged = true;
      for (let c = 0; c < Math.min(count, m); c++) {
        const last = ritz.vectors[c * m + m - 1];
        if (Math.abs(bNorm * last) > 1e-10 * Math.max(norm, 1e-300)) converged = false;
      }
      if (exhausted || converged) break;
    }
    beta.push(bNorm);
    q = new Float64Array(n);
    for (let i = 0; i < n; i++) q[i] = w[i] / bNorm;
  }
  const m = basis.length;
  const values = new Float64Array(count);
  const vectors = new Float64Array(count * n);
  for (let c = 0; c < Math.min(count, m); c++) {
    values[c] = ritz.values[c];
    for (let t = 0; t < m; t++) {
      const s = ritz.vectors[c * m + t];
      const b = basis[t];
      for (let i = 0; i < n; i++) vectors[c * n + i] += s * b[i];
    }
    normalise(vectors.subarray(c * n, c * n + n));
  }
  return { values, vectors };
}

/** Eigenpairs of the m*m symmetric tridiagonal matrix (alpha on the diagonal, beta beside it), largest first. */
function tridiagonalEigen(alpha: number[], beta: number[], m: number): { values: Float64Array; vectors: Float64Array } {
  const a = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    a[i * m + i] = alpha[i];
    if (i + 1 < m) {
      a[i * m + i + 1] = beta[i];
      a[(i + 1) * m + i] = beta[i];
    }
  }
  const { values, vectors } = jacobiEigen(a, m);
  const order = Array.from({ length: m }, (_, i) => i).sort((p, q) => values[q] - values[p] || p - q);
  const outValues = new Float64Array(m);
  const outVectors = new Float64Array(m * m);
  order.forEach((src, dst) => {
    outValues[dst] = values[src];
    for (let t = 0; t < m; t++) outVectors[dst * m + t] = vectors[t * m + src];
  });
  return { values: outValues, vectors: outVectors };
}

/** Cyclic Jacobi eigenvalue algorithm for a small dense symmetric matrix; eigenvectors are the columns of `vectors`. */
export function jacobiEigen(input: Float64Array, m: number): { values: Float64Array; vectors: Float64Array } {
  const a = Float64Array.from(input);
  const v = new Float64Array(m * m);
  for (let i = 0; i < m; i++) v[i * m + i] = 1;
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    let total = 0;
    for (let i = 0; i < m; i++) {
      for (let j = 0; j < m; j++) {
        const x = a[i * m + j] * a[i * m + j];
        total += x;
        if (i !== j) off += x;
      }
    }
    if (off <= 1e-30 * total || off === 0) break;
    for (let p = 0; p < m - 1; p++) {
      for (let q = p + 1; q < m; q++) {
        const apq = a[p * m + q];
        if (apq === 0) continue;
        // rotation angle that zeroes a[p][q]
        const theta = (a[q * m + q] - a[p * m + p]) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < m; k++) {
          const akp = a[k * m + p];
          const akq = a[k * m + q];
          a[k * m + p] = c * akp - s * akq;
          a[k * m + q] = s * akp + c * akq;
        }
        for (let k = 0; k < m; k++) {
          const apk = a[p * m + k];
          const aqk = a[q * m + k];
          a[p * m + k] = c * apk - s * aqk;
          a[q * m + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < m; k++) {
          const vkp = v[k * m + p];
          const vkq = v[k * m + q];
          v[k * m + p] = c * vkp - s * vkq;
          v[k * m + q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const values = new Float64Array(m);
  for (let i = 0; i < m; i++) values[i] = a[i * m + i];
  return { values, vectors: v };
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

function normalise(a: Float64Array): void {
  const s = Math.sqrt(dot(a, a));
  if (s > 0) for (let i = 0; i < a.length; i++) a[i] /= s;
}
