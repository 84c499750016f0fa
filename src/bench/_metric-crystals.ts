// Molecular-crystal-like periodic sets for the metric benchmarks (not a benchmark itself: the leading underscore
// keeps the runner from treating it as one). An invented rigid 11-atom molecule, four copies related by the
// P2_1/c operations (x,y,z; -x,y+1/2,-z+1/2; -x,-y,-z; x,-y+1/2,z+1/2: International Tables Vol. A, No. 14),
// in a monoclinic cell of about 14 Å³ per atom (a molecular-crystal-like density; common practice, from memory).
// Distinct packings differ in cell, orientation and position; copies of a packing differ by optimiser-like noise.
import type { PeriodicPointSet } from '../types.js';
import { seededUniform } from '../demo/prng.js';

/** Invented molecule, Cartesian Å: a slightly puckered six-ring with five substituents. */
const MOLECULE = [
  0, 1.4, 0.05, 1.21, 0.7, -0.05, 1.21, -0.7, 0.05, 0, -1.4, -0.05, -1.21, -0.7, 0.05, -1.21, 0.7, -0.05,
  0.1, 2.85, 0.2, 2.5, 1.45, -0.2, 2.4, -1.45, 0.25, -0.1, -2.8, -0.15, -2.55, 1.5, 0.3,
];

const OPS = [
  [1, 1, 1, 0, 0, 0],
  [-1, 1, -1, 0, 0.5, 0.5],
  [-1, -1, -1, 0, 0, 0],
  [1, -1, 1, 0, 0.5, 0.5],
];

interface PackingParams {
  a: number;
  b: number;
  betaRad: number;
  rot: number[];
  centre: number[];
}

/**
 * `packings` distinct structures, each repeated `copies` times with noise of about `noiseAngstrom` per atom
 * (and a matching relative noise on the cell). Returned packing by packing: copies of packing p are p*copies...
 */
export function noisyPackings(packings: number, copies: number, noiseAngstrom: number, seed: number): PeriodicPointSet[] {
  const rand = seededUniform(seed);
  const out: PeriodicPointSet[] = [];
  for (let p = 0; p < packings; p++) {
    const params = randomPacking(rand);
    for (let c = 0; c < copies; c++) out.push(build(params, c === 0 ? 0 : noiseAngstrom, rand));
  }
  return out;
}

/** A P1 cell of `atoms` random points at about 15 Å³ per atom: PDDs whose rows are all distinct. */
export function randomP1(atoms: number, seed: number): PeriodicPointSet {
  const rand = seededUniform(seed);
  const edge = Math.cbrt(15 * atoms);
  const basis = Float64Array.from([edge * (0.9 + 0.2 * rand()), 0, 0, edge * 0.1 * rand(), edge * (0.9 + 0.2 * rand()), 0, edge * 0.1 * rand(), edge * 0.1 * rand(), edge * (0.9 + 0.2 * rand())]);
  const frac = Float64Array.from({ length: 3 * atoms }, () => rand());
  const m = atoms;
  return { dim: 3, basis, motif: fracToCart(basis, frac), atomicNumbers: new Uint8Array(m).fill(6), asym: Int32Array.from({ length: m }, (_, i) => i), multiplicity: new Int32Array(m).fill(1) };
}

function randomPacking(rand: () => number): PackingParams {
  const rot = randomRotation(rand);
  return { a: 6 + 4 * rand(), b: 5 + 3 * rand(), betaRad: ((95 + 20 * rand()) * Math.PI) / 180, rot, centre: [0.5 * rand(), 0.25 * rand(), 0.5 * rand()] };
}

function build(p: PackingParams, noise: number, rand: () => number): PeriodicPointSet {
  const jitter = () => noise * (2 * rand() - 1);
  const a = p.a * (1 + jitter() / 10);
  const b = p.b * (1 + jitter() / 10);
  const beta = p.betaRad + jitter() / 100;
  const c = (44 * 14) / (p.a * p.b * Math.sin(p.betaRad));
  const basis = Float64Array.from([a, 0, 0, 0, b, 0, c * Math.cos(beta), 0, c * Math.sin(beta)]);
  return p21cSet(basis, placeMolecule(MOLECULE, p.rot, p.centre, inverse3(basis), jitter));
}

/** A random rotation (row-major 3x3) from a random unit quaternion; draws four numbers from `rand`. */
export function randomRotation(rand: () => number): number[] {
  const q = [rand() - 0.5, rand() - 0.5, rand() - 0.5, rand() - 0.5];
  const qn = Math.hypot(...q);
  const [w, x, y, z] = q.map((t) => t / qn);
  return [
    1 - 2 * (y * y + z * z), 2 * (x * y - w * z), 2 * (x * z + w * y),
    2 * (x * y + w * z), 1 - 2 * (x * x + z * z), 2 * (y * z - w * x),
    2 * (x * z - w * y), 2 * (y * z + w * x), 1 - 2 * (x * x + y * y),
  ];
}

/**
 * Fractional coordinates of a molecule (Cartesian Å, 3 per atom) turned by `rot` and placed at fractional `centre`
 * in the cell whose inverse basis is `inv`; `jitter`, if given, is added to each molecule coordinate first
 * (x, y, z of each atom in turn).
 */
export function placeMolecule(molecule: number[], rot: number[], centre: number[], inv: Float64Array, jitter?: () => number): Float64Array {
  const atoms = molecule.length / 3;
  const asymFrac = new Float64Array(3 * atoms);
  for (let i = 0; i < atoms; i++) {
    const m = jitter
      ? [molecule[3 * i] + jitter(), molecule[3 * i + 1] + jitter(), molecule[3 * i + 2] + jitter()]
      : [molecule[3 * i], molecule[3 * i + 1], molecule[3 * i + 2]];
    const cart = [0, 1, 2].map((r) => rot[3 * r] * m[0] + rot[3 * r + 1] * m[1] + rot[3 * r + 2] * m[2]);
    for (let col = 0; col < 3; col++) asymFrac[3 * i + col] = centre[col] + cart[0] * inv[col] + cart[1] * inv[3 + col] + cart[2] * inv[6 + col];
  }
  return asymFrac;
}

/** The P2_1/c cell (four images of each asymmetric-unit point, wrapped to [0, 1)) as a carbon-only periodic set. */
export function p21cSet(basis: Float64Array, asymFrac: Float64Array): PeriodicPointSet {
  const m = asymFrac.length / 3;
  const frac = new Float64Array(4 * m * 3);
  const asym = new Int32Array(m);
  for (let i = 0; i < m; i++) {
    asym[i] = 4 * i;
    for (let o = 0; o < 4; o++) {
      for (let col = 0; col < 3; col++) {
        const f = OPS[o][col] * asymFrac[3 * i + col] + OPS[o][3 + col];
        frac[(4 * i + o) * 3 + col] = f - Math.floor(f);
      }
    }
  }
  return { dim: 3, basis, motif: fracToCart(basis, frac), atomicNumbers: new Uint8Array(4 * m).fill(6), asym, multiplicity: new Int32Array(m).fill(4) };
}

/** Cartesian coordinates of fractional points (3 per point) in the cell whose rows are `basis`. */
export function fracToCart(basis: Float64Array, frac: Float64Array): Float64Array {
  const out = new Float64Array(frac.length);
  for (let t = 0; t < frac.length / 3; t++) {
    for (let c = 0; c < 3; c++) out[3 * t + c] = frac[3 * t] * basis[c] + frac[3 * t + 1] * basis[3 + c] + frac[3 * t + 2] * basis[6 + c];
  }
  return out;
}

/** Inverse of a 3x3 matrix whose rows are lattice vectors (cofactor formula). */
export function inverse3(m: Float64Array): Float64Array {
  const d = m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
  return Float64Array.from([
    (m[4] * m[8] - m[5] * m[7]) / d, (m[2] * m[7] - m[1] * m[8]) / d, (m[1] * m[5] - m[2] * m[4]) / d,
    (m[5] * m[6] - m[3] * m[8]) / d, (m[0] * m[8] - m[2] * m[6]) / d, (m[2] * m[3] - m[0] * m[5]) / d,
    (m[3] * m[7] - m[4] * m[6]) / d, (m[1] * m[6] - m[0] * m[7]) / d, (m[0] * m[4] - m[1] * m[3]) / d,
  ]);
}

/** Seeded uniform stream for benchmark data (mulberry32, shared with the demo; common practice). */
export { seededUniform as seeded };
