// Limited-memory BFGS minimisation with a backtracking (Armijo) line search (Nocedal & Wright, "Numerical
// Optimization", Springer 2006, algorithms 7.4 and 3.1). Deterministic; stops at a finite gradient tolerance as a
// real structure optimiser does, so two runs into the same minimum end a little apart.

export interface LbfgsOptions {
  /** Stop when the largest gradient component is below this. */
  gradientTolerance: number;
  maxIterations: number;
  /** History pairs kept. Default 8. */
  memory?: number;
  /** Longest step (Euclidean norm in the variables) tried by the line search. */
  maxStep: number;
}

export interface LbfgsResult {
  x: Float64Array;
  value: number;
  iterations: number;
  evaluations: number;
  /** Largest gradient component at the end. */
  gradientMax: number;
  converged: boolean;
  /** Why it stopped, in words. */
  stop: string;
}

/** `fg(x, g)` returns the value at x and writes the gradient into g (a non-finite value means "not allowed here"). */
export type ValueAndGradient = (x: Float64Array, g: Float64Array) => number;

export function lbfgs(fg: ValueAndGradient, x0: Float64Array, opts: LbfgsOptions): LbfgsResult {
  const n = x0.length;
  const m = opts.memory ?? 8;
  const x = Float64Array.from(x0);
  const g = new Float64Array(n);
  const xNew = new Float64Array(n);
  const gNew = new Float64Array(n);
  const d = new Float64Array(n);
  const sHist = Array.from({ length: m }, () => new Float64Array(n));
  const yHist = Array.from({ length: m }, () => new Float64Array(n));
  const rho = new Float64Array(m);
  const alpha = new Float64Array(m);
  let stored = 0;
  let newest = -1;
  let evaluations = 1;
  let value = fg(x, g);
  if (!Number.isFinite(value)) return done('the start is not allowed (collapsed or degenerate)', false, 0);
  for (let iter = 0; iter < opts.maxIterations; iter++) {
    const gMax = maxAbs(g);
    if (gMax < opts.gradientTolerance) return done('gradient below tolerance', true, iter);
    // Two-loop recursion: d = -H g.
    for (let i = 0; i < n; i++) d[i] = -g[i];
    for (let k = 0; k < stored; k++) {
      const h = (newest - k + m) % m;
      alpha[h] = rho[h] * dot(sHist[h], d);
      axpy(-alpha[h], yHist[h], d);
    }
    if (stored > 0) {
      const h = newest;
      const gamma = dot(sHist[h], yHist[h]) / dot(yHist[h], yHist[h]);
      for (let i = 0; i < n; i++) d[i] *= gamma;
    } else {
      // First step: a steepest-descent step no longer than maxStep / 4.
      const scale = opts.maxStep / 4 / Math.max(norm(d), 1e-300);
      for (let i = 0; i < n; i++) d[i] *= Math.min(1, scale);
    }
    for (let k = stored - 1; k >= 0; k--) {
      const h = (newest - k + m) % m;
      const beta = rho[h] * dot(yHist[h], d);
      axpy(alpha[h] - beta, sHist[h], d);
    }
    let slope = dot(g, d);
    if (!(slope < 0)) {
      // Not a descent direction (stale curvature): forget the history and go downhill.
      stored = 0;
      for (let i = 0; i < n; i++) d[i] = -g[i];
      slope = dot(g, d);
    }
    // Backtracking line search with the Armijo condition, steps capped at maxStep.
    let step = Math.min(1, opts.maxStep / Math.max(norm(d), 1e-300));
    let accepted = false;
    let vNew = Infinity;
    for (let tries = 0; tries < 40; tries++) {
      for (let i = 0; i < n; i++) xNew[i] = x[i] + step * d[i];
      vNew = fg(xNew, gNew);
      evaluations++;
      if (Number.isFinite(vNew) && vNew <= value + 1e-4 * step * slope) {
        accepted = true;
        break;
      }
      // Quadratic interpolation of the step where possible, kept within [0.1, 0.5] of the last one.
      let next = 0.5 * step;
      if (Number.isFinite(vNew)) {
        const q = (-slope * step * step) / (2 * (vNew - value - slope * step));
        if (q > 0.1 * step && q < 0.5 * step) next = q;
      }
      step = next;
    }
    if (!accepted) return done('the line search found no lower point', maxAbs(g) < 10 * opts.gradientTolerance, iter);
    // Curvature pair, kept only when it is positive (keeps H positive definite).
    const slot = (newest + 1) % m;
    let sy = 0;
    for (let i = 0; i < n; i++) {
      sHist[slot][i] = xNew[i] - x[i];
      yHist[slot][i] = gNew[i] - g[i];
      sy += sHist[slot][i] * yHist[slot][i];
    }
    if (sy > 1e-12) {
      rho[slot] = 1 / sy;
      newest = slot;
      stored = Math.min(m, stored + 1);
    }
    x.set(xNew);
    g.set(gNew);
    value = vNew;
  }
  return done('iteration limit reached', false, opts.maxIterations);

  function done(stop: string, converged: boolean, iterations: number): LbfgsResult {
    return { x, value, iterations, evaluations, gradientMax: maxAbs(g), converged, stop };
  }
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

function axpy(a: number, x: Float64Array, y: Float64Array): void {
  for (let i = 0; i < y.length; i++) y[i] += a * x[i];
}

function norm(a: Float64Array): number {
  return Math.sqrt(dot(a, a));
}

function maxAbs(a: Float64Array): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
  return m;
}
