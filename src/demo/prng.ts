// A small seeded pseudo-random generator so that generated landscapes are the same on every machine.
// mulberry32 (a 32-bit state generator in common use, public domain; common practice) plus Box–Muller
// for normal deviates.

export interface Rng {
  /** Uniform in [0, 1). */
  next(): number;
  /** Uniform in [lo, hi). */
  uniform(lo: number, hi: number): number;
  /** Integer in [0, n). */
  int(n: number): number;
  /** Normal deviate with mean 0 and standard deviation `sigma`. */
  normal(sigma: number): number;
  /** Fisher–Yates shuffle in place; returns the array. */
  shuffle<T>(items: T[]): T[];
}

/**
 * The bare mulberry32 stream: uniform deviates in [0, 1) from a 32-bit seed. Tests and benchmarks that
 * only need uniforms use this; `makeRng(seed).next` gives the same stream.
 */
export function seededUniform(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function makeRng(seed: number): Rng {
  let spare: number | null = null;
  const next = seededUniform(seed);
  const rng: Rng = {
    next,
    uniform: (lo, hi) => lo + (hi - lo) * next(),
    int: (n) => Math.min(n - 1, Math.floor(next() * n)),
    normal: (sigma) => {
      if (spare !== null) {
        const s = spare;
        spare = null;
        return s * sigma;
      }
      // Box–Muller: two uniforms give two independent normal deviates.
      let u = next();
      while (u <= 1e-12) u = next();
      const v = next();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v) * sigma;
    },
    shuffle: <T>(items: T[]): T[] => {
      for (let i = items.length - 1; i > 0; i--) {
        const j = Math.min(i, Math.floor(next() * (i + 1)));
        const tmp = items[i];
        items[i] = items[j];
        items[j] = tmp;
      }
      return items;
    },
  };
  return rng;
}
