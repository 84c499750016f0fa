// Metric map for sets too large for an n*n matrix: landmark multidimensional scaling.
//
// Method: de Silva & Tenenbaum, "Sparse multidimensional scaling using landmark points", Stanford
// technical report 2004 (also "Global versus local methods in nonlinear dimensionality reduction",
// NIPS 2002). L landmarks are chosen by the max-min rule (each new landmark is the point farthest
// from those chosen so far, starting from point 0), embedded by classical scaling refined with SMACOF
// (./embedding.ts), and every other point is placed by distance-based triangulation from its
// distances to the landmarks, then moved to the position that minimises its own stress against the
// fixed landmarks (the one-point case of stress majorisation, Borg & Groenen, Modern
// Multidimensional Scaling, 2005, ch. 8). Needs L*n distances instead of n*n.
import { classicalEigen, embed2d, orientAxes, smacof, EMBED_METHOD, type EmbedOptions, type Embedding2d } from './embedding.js';

export interface LandmarkOptions extends EmbedOptions {
  /** Number of landmarks (default 200; all points when n is at most that). */
  landmarks?: number;
  /** Majorisation steps per placed point (default 50). */
  placementIterations?: number;
}

export interface LandmarkEmbedding extends Embedding2d {
  /** Point indices of the landmarks, in the order chosen. */
  landmarks: Int32Array;
  /** How many times `distance` was called. */
  distanceEvaluations: number;
}

/**
 * 2-D embedding of n points given only a symmetric `distance(i, j)`. With n at most the landmark
 * count this is exactly `embed2d` on the full matrix. Quality: Kruskal's stress-1 over the pairs
 * (landmark, point), the only distances known.
 */
export function embed2dLandmarks(n: number, distance: (i: number, j: number) => number, opts: LandmarkOptions = {}): LandmarkEmbedding {
  if (!Number.isInteger(n) || n < 0) throw new Error(`embed2dLandmarks: point count must be a non-negative integer, got ${n}`);
  const wanted = opts.landmarks ?? 200;
  if (!Number.isInteger(wanted) || wanted < 3) throw new Error(`embed2dLandmarks: landmark count must be an integer >= 3, got ${wanted}`);
  let evaluations = 0;
  const measure = (i: number, j: number): number => {
    evaluations++;
    const d = distance(i, j);
    if (!(d >= 0) || d === Infinity) throw new Error(`embed2dLandmarks: distance(${i}, ${j}) is ${d}; distances must be finite and >= 0`);
    return d;
  };
  if (n <= wanted) {
    // few points: the full matrix is cheap, use the full method
    const dist = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      for (let j = i + 1; j < n; j++) {
        const d = measure(i, j);
        dist[i * n + j] = d;
        dist[j * n + i] = d;
      }
    }
    const full = embed2d(dist, n, opts);
    return { ...full, landmarks: Int32Array.from({ length: n }, (_, i) => i), distanceEvaluations: evaluations };
  }

  // max-min landmark choice; rows[l*n + j] is the distance from landmark l to point j
  const rows = new Float64Array(wanted * n);
  const chosen: number[] = [];
  const nearest = new Float64Array(n).fill(Infinity);
  let next = 0;
  while (chosen.length < wanted) {
    const l = chosen.length;
    chosen.push(next);
    const o = l * n;
    for (let j = 0; j < n; j++) {
      const d = j === next ? 0 : measure(next, j);
      rows[o + j] = d;
      if (d < nearest[j]) nearest[j] = d;
    }
    let far = -1;
    for (let j = 0; j < n; j++) if (far < 0 || nearest[j] > nearest[far]) far = j;
    // every point sits on a landmark already: no further landmark adds anything
    if (nearest[far] === 0) break;
    next = far;
  }
  const L = chosen.length;
  const landmarkDist = new Float64Array(L * L);
  for (let a = 0; a < L; a++) {
    for (let b = a + 1; b < L; b++) {
      const d = rows[a * n + chosen[b]];
      landmarkDist[a * L + b] = d;
      landmarkDist[b * L + a] = d;
    }
  }

  // classical scaling of the landmarks, and triangulation of every point from it:
  // x_c = -1/2 sum_l v_c[l] / sqrt(lambda_c) (delta_l^2 - mean_b Delta_bl^2)
  const { values, vectors } = classicalEigen(landmarkDist, L);
  const colMeanSq = new Float64Array(L);
  for (let a = 0; a < L; a++) for (let b = 0; b < L; b++) colMeanSq[b] += (landmarkDist[a * L + b] * landmarkDist[a * L + b]) / L;
  const x = new Float64Array(2 * n);
  for (let c = 0; c < 2; c++) {
    if (!(values[c] > 0)) continue;
    const inv = 1 / Math.sqrt(values[c]);
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let l = 0; l < L; l++) {
        const d = rows[l * n + j];
        s += vectors[c * L + l] * (d * d - colMeanSq[l]);
      }
      x[2 * j + c] = -0.5 * inv * s;
    }
  }

  // refine the landmark configuration, then place each point against the fixed landmarks
  const start = new Float64Array(2 * L);
  for (let l = 0; l < L; l++) {
    start[2 * l] = x[2 * chosen[l]];
    start[2 * l + 1] = x[2 * chosen[l] + 1];
  }
  const maxIterations = opts.maxIterations ?? Math.max(20, Math.min(300, Math.floor(6e8 / (L * L))));
  const y = smacof(landmarkDist, L, start, { maxIterations, relativeTolerance: opts.relativeTolerance ?? 1e-7 }).coords;
  const steps = opts.placementIterations ?? 50;
  for (let j = 0; j < n; j++) {
    // a landmark, or a point at distance 0 from one, takes that landmark's place
    let on = -1;
    for (let l = 0; l < L && on < 0; l++) if (rows[l * n + j] === 0) on = l;
    if (on >= 0) {
      x[2 * j] = y[2 * on];
      x[2 * j + 1] = y[2 * on + 1];
      continue;
    }
    placePoint(x, j, y, rows, n, L, steps);
  }
  orientAxes(x, n);

  const coords: Array<[number, number]> = new Array(n);
  for (let i = 0; i < n; i++) coords[i] = [x[2 * i], x[2 * i + 1]];
  return {
    method: `landmark MDS (de Silva & Tenenbaum) with ${L} landmarks; landmarks by ${EMBED_METHOD}`,
    coords,
    quality: [{ name: 'Kruskal stress-1 (landmark pairs)', value: landmarkStress(x, rows, chosen, n) }],
    landmarks: Int32Array.from(chosen),
    distanceEvaluations: evaluations,
  };
}

/**
 * Move point j to lower sum_l (|x - y_l| - delta_l)^2 with the landmarks y fixed, by the update
 * x <- (1/L) sum_l [ y_l + delta_l (x - y_l) / |x - y_l| ], which never raises that sum.
 */
function placePoint(x: Float64Array, j: number, y: Float64Array, rows: Float64Array, n: number, L: number, steps: number): void {
  let px = x[2 * j];
  let py = x[2 * j + 1];
  for (let s = 0; s < steps; s++) {
    let nx = 0;
    let ny = 0;
    for (let l = 0; l < L; l++) {
      const dx = px - y[2 * l];
      const dy = py - y[2 * l + 1];
      const d = Math.sqrt(dx * dx + dy * dy);
      nx += y[2 * l];
      ny += y[2 * l + 1];
      if (d > 0) {
        const b = rows[l * n + j] / d;
        nx += b * dx;
        ny += b * dy;
      }
    }
    nx /= L;
    ny /= L;
    const moved = Math.abs(nx - px) + Math.abs(ny - py);
    px = nx;
    py = ny;
    if (moved <= 1e-12 * (Math.abs(px) + Math.abs(py) + 1e-300)) break;
  }
  x[2 * j] = px;
  x[2 * j + 1] = py;
}

/** Kruskal's stress-1 over the pairs (landmark, other point): the distances that were measured. */
function landmarkStress(x: Float64Array, rows: Float64Array, chosen: number[], n: number): number {
  let num = 0;
  let den = 0;
  chosen.forEach((p, l) => {
    for (let j = 0; j < n; j++) {
      if (j === p) continue;
      const dx = x[2 * p] - x[2 * j];
      const dy = x[2 * p + 1] - x[2 * j + 1];
      const d2 = dx * dx + dy * dy;
      const r = Math.sqrt(d2) - rows[l * n + j];
      num += r * r;
      den += d2;
    }
  });
  if (den === 0) return num === 0 ? 0 : Infinity;
  return Math.sqrt(num / den);
}
