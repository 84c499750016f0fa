// 3x3 matrix helpers for the generator (row-major number[9]); kept private to src/demo so the generator
// does not depend on the geometry code it is used to test.

export type Mat3 = number[];
export type Vec3 = [number, number, number];

export function matMul(a: Mat3, b: Mat3): Mat3 {
  const out = new Array<number>(9).fill(0);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) out[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
  return out;
}

export function matVec(a: Mat3, v: readonly number[]): Vec3 {
  return [
    a[0] * v[0] + a[1] * v[1] + a[2] * v[2],
    a[3] * v[0] + a[4] * v[1] + a[5] * v[2],
    a[6] * v[0] + a[7] * v[1] + a[8] * v[2],
  ];
}

/** Row vector times matrix: v^T A (fractional row vector times basis rows gives Cartesian). */
export function vecMat(v: readonly number[], a: Mat3): Vec3 {
  return [
    v[0] * a[0] + v[1] * a[3] + v[2] * a[6],
    v[0] * a[1] + v[1] * a[4] + v[2] * a[7],
    v[0] * a[2] + v[1] * a[5] + v[2] * a[8],
  ];
}

export function det(a: Mat3): number {
  return a[0] * (a[4] * a[8] - a[5] * a[7]) - a[1] * (a[3] * a[8] - a[5] * a[6]) + a[2] * (a[3] * a[7] - a[4] * a[6]);
}

export function inverse(a: Mat3): Mat3 {
  const d = det(a);
  if (Math.abs(d) < 1e-12) throw new Error('singular 3x3 matrix');
  const c = [
    a[4] * a[8] - a[5] * a[7], a[2] * a[7] - a[1] * a[8], a[1] * a[5] - a[2] * a[4],
    a[5] * a[6] - a[3] * a[8], a[0] * a[8] - a[2] * a[6], a[2] * a[3] - a[0] * a[5],
    a[3] * a[7] - a[4] * a[6], a[1] * a[6] - a[0] * a[7], a[0] * a[4] - a[1] * a[3],
  ];
  return c.map((x) => x / d);
}

export function transpose(a: Mat3): Mat3 {
  return [a[0], a[3], a[6], a[1], a[4], a[7], a[2], a[5], a[8]];
}

export function identity(): Mat3 {
  return [1, 0, 0, 0, 1, 0, 0, 0, 1];
}

/** Rotation matrix about a unit axis by `angleRad` (Rodrigues' formula; common practice). */
export function rotation(axis: Vec3, angleRad: number): Mat3 {
  const n = Math.hypot(axis[0], axis[1], axis[2]);
  const [x, y, z] = [axis[0] / n, axis[1] / n, axis[2] / n];
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const t = 1 - c;
  return [
    t * x * x + c, t * x * y - s * z, t * x * z + s * y,
    t * x * y + s * z, t * y * y + c, t * y * z - s * x,
    t * x * z - s * y, t * y * z + s * x, t * z * z + c,
  ];
}

/** Cell lengths (Å) and angles (degrees) to basis rows: a along x, b in the xy plane (International Tables Vol. B convention; common practice). */
export function basisFromCell(a: number, b: number, c: number, alpha: number, beta: number, gamma: number): Mat3 {
  const r = Math.PI / 180;
  const ca = Math.cos(alpha * r);
  const cb = Math.cos(beta * r);
  const cg = Math.cos(gamma * r);
  const sg = Math.sin(gamma * r);
  const cx = c * cb;
  const cy = (c * (ca - cb * cg)) / sg;
  const cz = Math.sqrt(Math.max(0, c * c - cx * cx - cy * cy));
  return [a, 0, 0, b * cg, b * sg, 0, cx, cy, cz];
}

/** Basis rows back to cell lengths (Å) and angles (degrees). */
export function cellFromBasis(m: Mat3): [number, number, number, number, number, number] {
  const len = (i: number) => Math.hypot(m[3 * i], m[3 * i + 1], m[3 * i + 2]);
  const dot = (i: number, j: number) => m[3 * i] * m[3 * j] + m[3 * i + 1] * m[3 * j + 1] + m[3 * i + 2] * m[3 * j + 2];
  const a = len(0);
  const b = len(1);
  const c = len(2);
  const deg = 180 / Math.PI;
  return [a, b, c, Math.acos(dot(1, 2) / (b * c)) * deg, Math.acos(dot(0, 2) / (a * c)) * deg, Math.acos(dot(0, 1) / (a * b)) * deg];
}
