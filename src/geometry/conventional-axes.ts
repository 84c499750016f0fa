// Candidate conventional cells of a crystal from its point group: lattice vectors along the symmetry axes, as
// International Tables define the conventional cell of each crystal system (Vol. A, Sect. 2.1 and 9.1):
// monoclinic b along the 2-fold axis with a and c spanning the perpendicular lattice plane; orthorhombic
// and cubic a, b, c along the three 2-fold (or 4-fold) axes; tetragonal c along the 4-fold axis and b = 4(a);
// trigonal and hexagonal c along the 3- or 6-fold axis, b = 3(a) at 120°. Where a system leaves a choice
// (which plane vectors, which axis is a), every choice is returned so that the caller can find the one that
// puts the group in its standard setting. The axis-finding follows R. W. Grosse-Kunstleve, "Algorithms for
// deriving crystallographic space-group information", Acta Cryst. A 55 (1999) 383-395.
import type { CrystalSystem } from './point-group.js';
import { rotationType } from './point-group.js';
import { determinant } from './reduce.js';
import { integerKernel } from './integer-lattice.js';
import { mul3, mulVec3 } from './matrix3.js';

/**
 * Candidate conventional bases, each an integer matrix M (row-major) whose rows are the conventional
 * vectors a, b, c in the coordinates of the (primitive) `basis` rows, right-handed (det M > 0), in the order
 * worth trying. `rotations` are the crystal's point-group rotations on fractional columns of that basis.
 */
export function conventionalCandidates(system: CrystalSystem, rotations: number[][], basis: ArrayLike<number>): number[][] {
  const proper = rotations.map((w) => (determinant(w, 3) < 0 ? w.map((x) => -x + 0) : w.slice()));
  const ofOrder = (k: number) => proper.filter((w) => Math.abs(rotationType(w)) === k);
  switch (system) {
    case 'triclinic':
      return [[1, 0, 0, 0, 1, 0, 0, 0, 1]];
    case 'monoclinic': {
      const two = ofOrder(2)[0];
      const b = axisOf(two);
      const [p1, p2] = perpendicularPlane(two, 2, basis);
      const inPlane = [p1, p2, add(p1, p2), sub(p1, p2)];
      const options = [...inPlane, ...inPlane.map(neg)];
      const out: number[][] = [];
      for (const a of options) {
        for (const c of options) {
          const m = [...a, ...b, ...c];
          // (a, c) must be a basis of the plane lattice: then det M is the index of that lattice plus the axis.
          if (determinant(m, 3) <= 0 || !isPlaneBasis(a, c, p1, p2)) continue;
          out.push(m);
        }
      }
      // Compact cells first: a standard setting is usually reached with the shortest plane vectors.
      return sortByLength(out, basis);
    }
    case 'orthorhombic':
      return permutedAxes(distinctAxes(ofOrder(2)));
    case 'cubic': {
      const fours = ofOrder(4);
      return permutedAxes(distinctAxes(fours.length > 0 ? fours : ofOrder(2)));
    }
    case 'tetragonal': {
      const four = ofOrder(4)[0];
      const c = axisOf(four);
      const [p1] = perpendicularPlane(four, 4, basis);
      const turns = [p1, mulVec3(four, p1), neg(p1), neg(mulVec3(four, p1))];
      return turns.map((a) => rightHanded(a, mulVec3(four, a), c));
    }
    case 'trigonal':
    case 'hexagonal': {
      // A 6-fold's square is a 3-fold about the same axis.
      const sixes = ofOrder(6);
      const three = sixes.length > 0 ? mul3(sixes[0], sixes[0]) : ofOrder(3)[0];
      const c = axisOf(three);
      const [p1] = perpendicularPlane(three, 3, basis);
      const p2 = mulVec3(three, p1);
      const p3 = mulVec3(three, p2);
      return [p1, neg(p1), p2, neg(p2), p3, neg(p3)].map((a) => rightHanded(a, mulVec3(three, a), c));
    }
  }
}

/** The shortest lattice vector along the axis of a proper rotation (integer, first non-zero entry positive). */
export function axisOf(w: ArrayLike<number>): number[] {
  const k = integerKernel([w[0] - 1, w[1], w[2], w[3], w[4] - 1, w[5], w[6], w[7], w[8] - 1]);
  if (k.length !== 1) throw new Error('a rotation other than the identity has a one-dimensional axis');
  return positive(k[0]);
}

/**
 * A reduced basis (Lagrange–Gauss reduction in the metric of `basis`) of the lattice plane perpendicular to
 * the axis of a proper rotation of order `order`: the kernel of I + W + ... + W^(order-1).
 */
function perpendicularPlane(w: number[], order: number, basis: ArrayLike<number>): [number[], number[]] {
  let sum = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  let power = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  for (let i = 1; i < order; i++) {
    power = mul3(power, w);
    sum = sum.map((x, j) => x + power[j]);
  }
  const k = integerKernel(sum);
  if (k.length !== 2) throw new Error('the lattice plane perpendicular to a rotation axis is two-dimensional');
  let [u, v] = k;
  // Lagrange–Gauss: repeatedly shorten the longer vector by the nearest multiple of the shorter one.
  for (let guard = 0; guard < 100; guard++) {
    if (norm2(u, basis) > norm2(v, basis)) [u, v] = [v, u];
    const q = Math.round(dot(u, v, basis) / norm2(u, basis));
    if (q === 0) break;
    v = v.map((x, i) => x - q * u[i]);
  }
  return [u, v];
}

/** One vector per distinct axis of the given proper rotations. */
function distinctAxes(rotations: number[][]): number[][] {
  const seen = new Set<string>();
  const out: number[][] = [];
  for (const w of rotations) {
    const a = axisOf(w);
    const key = a.join(',');
    if (!seen.has(key)) {
      seen.add(key);
      out.push(a);
    }
  }
  return out;
}

/** The six orders of three axes, the last one turned round where needed to keep the set right-handed. */
function permutedAxes(axes: number[][]): number[][] {
  if (axes.length !== 3) throw new Error(`expected three symmetry axes, found ${axes.length}`);
  const perms = [[0, 1, 2], [1, 2, 0], [2, 0, 1], [1, 0, 2], [0, 2, 1], [2, 1, 0]];
  return perms.map(([i, j, k]) => rightHanded(axes[i], axes[j], axes[k]));
}

function rightHanded(a: number[], b: number[], c: number[]): number[] {
  const m = [...a, ...b, ...c];
  return determinant(m, 3) > 0 ? m : [...a, ...b, ...neg(c)];
}

function isPlaneBasis(a: number[], c: number[], p1: number[], p2: number[]): boolean {
  // Coordinates of a and c in (p1, p2): a 2x2 integer matrix of determinant ±1.
  const ca = planeCoords(a, p1, p2), cc = planeCoords(c, p1, p2);
  return Math.abs(ca[0] * cc[1] - ca[1] * cc[0]) === 1;
}

function planeCoords(v: number[], p1: number[], p2: number[]): [number, number] {
  // v = x p1 + y p2 (exact for vectors built from p1 and p2): solve with the cross product.
  const cross = (s: number[], t: number[]) => [s[1] * t[2] - s[2] * t[1], s[2] * t[0] - s[0] * t[2], s[0] * t[1] - s[1] * t[0]];
  const n = cross(p1, p2);
  const nn = n[0] * n[0] + n[1] * n[1] + n[2] * n[2];
  const vx = cross(v, p2), vy = cross(p1, v);
  return [Math.round((vx[0] * n[0] + vx[1] * n[1] + vx[2] * n[2]) / nn), Math.round((vy[0] * n[0] + vy[1] * n[1] + vy[2] * n[2]) / nn)];
}

function sortByLength(ms: number[][], basis: ArrayLike<number>): number[][] {
  const size = (m: number[]) => Math.sqrt(norm2(m.slice(0, 3), basis)) + Math.sqrt(norm2(m.slice(6, 9), basis));
  return ms.map((m) => ({ m, s: size(m) })).sort((x, y) => x.s - y.s).map((x) => x.m);
}

function dot(u: number[], v: number[], basis: ArrayLike<number>): number {
  let s = 0;
  for (let c = 0; c < 3; c++) {
    const x = u[0] * basis[c] + u[1] * basis[3 + c] + u[2] * basis[6 + c];
    const y = v[0] * basis[c] + v[1] * basis[3 + c] + v[2] * basis[6 + c];
    s += x * y;
  }
  return s;
}

function norm2(u: number[], basis: ArrayLike<number>): number {
  return dot(u, u, basis);
}

const add = (u: number[], v: number[]) => u.map((x, i) => x + v[i]);
const sub = (u: number[], v: number[]) => u.map((x, i) => x - v[i]);
const neg = (u: number[]) => u.map((x) => -x + 0);

function positive(v: number[]): number[] {
  const first = v.find((x) => x !== 0) ?? 1;
  return first < 0 ? neg(v) : v;
}
