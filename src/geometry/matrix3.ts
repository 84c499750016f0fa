// Small 3x3 matrix arithmetic for the symmetry search (row-major, 9 numbers). Integer matrices (rotations
// of lattice operations, changes of basis) and real ones (bases, coordinate maps) share these helpers;
// determinant and inverse live in ./reduce.ts.

export type M3 = ArrayLike<number>;

/** a * b. */
export function mul3(a: M3, b: M3): number[] {
  const out = new Array<number>(9);
  for (let i = 0; i < 3; i++) {
    const a0 = a[3 * i], a1 = a[3 * i + 1], a2 = a[3 * i + 2];
    out[3 * i] = a0 * b[0] + a1 * b[3] + a2 * b[6];
    out[3 * i + 1] = a0 * b[1] + a1 * b[4] + a2 * b[7];
    out[3 * i + 2] = a0 * b[2] + a1 * b[5] + a2 * b[8];
  }
  return out;
}

export function transpose3(a: M3): number[] {
  return [a[0], a[3], a[6], a[1], a[4], a[7], a[2], a[5], a[8]];
}

/** a * v (v a column). */
export function mulVec3(a: M3, v: ArrayLike<number>): [number, number, number] {
  return [
    a[0] * v[0] + a[1] * v[1] + a[2] * v[2],
    a[3] * v[0] + a[4] * v[1] + a[5] * v[2],
    a[6] * v[0] + a[7] * v[1] + a[8] * v[2],
  ];
}

/** Round every entry; null when an entry is further than `slack` from a whole number. */
export function roundedInteger3(a: M3, slack = 1e-6): number[] | null {
  const out = new Array<number>(9);
  for (let i = 0; i < 9; i++) {
    const r = Math.round(a[i]);
    if (Math.abs(a[i] - r) > slack) return null;
    out[i] = r + 0;
  }
  return out;
}

/** Greatest common divisor of two integers (non-negative result). */
export function gcd(a: number, b: number): number {
  a = Math.abs(a);
  b = Math.abs(b);
  while (b !== 0) {
    const t = a % b;
    a = b;
    b = t;
  }
  return a;
}

/**
 * Squared length (in the units of `basis`) of the fractional difference (d0, d1, d2) taken to its nearest lattice
 * translate: each component moved into [-1/2, 1/2], then through the basis rows. Exact for differences shorter than
 * half the smallest plane spacing of a reduced cell, which is how the symmetry search uses it.
 */
export function wrappedLength2(d0: number, d1: number, d2: number, basis: ArrayLike<number>): number {
  d0 -= Math.round(d0);
  d1 -= Math.round(d1);
  d2 -= Math.round(d2);
  const x = d0 * basis[0] + d1 * basis[3] + d2 * basis[6];
  const y = d0 * basis[1] + d1 * basis[4] + d2 * basis[7];
  const z = d0 * basis[2] + d1 * basis[5] + d2 * basis[8];
  return x * x + y * y + z * z;
}
