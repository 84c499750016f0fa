// Rigid-body relaxation of one demo packing: the molecule's centroid (3), its orientation (3) and the cell
// parameters its crystal system leaves free (orthorhombic a, b, c; monoclinic a, b, c, beta; triclinic all six)
// move together to a minimum of the lattice energy per molecule (./lattice-energy.ts), with L-BFGS (./lbfgs.ts)
// and an analytic gradient. Variables are scaled so one unit moves atoms by roughly an ångström.
import type { MoleculeTemplate } from '../molecule.js';
import { GROUPS, type GeneratedGroup, type Op } from '../space-groups.js';
import { groupOps } from '../packing.js';
import { basisFromCell, cellFromBasis, inverse, matMul, type Mat3 } from '../mat3.js';
import { latticeEnergy, makeWorkspace, type EnergyGradient, type EnergyWorkspace } from './lattice-energy.js';
import { pairTable, type PairTable } from './potential.js';
import { lbfgs, type LbfgsResult } from './lbfgs.js';

/** Variable units: cell angles in radians times this (Å per radian, about a cell length's lever). */
const ANGLE_SCALE = 10;
/** Fractional centre times this. */
const CENTRE_SCALE = 10;
/** Rotation vector (radians) times this (about the molecule's radius). */
const ROTATION_SCALE = 3;
/** Stop when the largest gradient component is below this, kJ/mol per variable unit. At 0.002 repeated minima differ
 * by at most about 0.007 Å (EMD), the few-thousandths-of-an-Å noise of a production optimiser; 0.02 let it reach 0.04 Å. */
export const GRADIENT_TOLERANCE = 0.002;
export const MAX_ITERATIONS = 600;
/**
 * First-stage pressure (GPa). Under the truncated potential a loose start can drift apart along one direction until
 * its molecules stop interacting there, a flat region no optimiser leaves; relaxing first under a small pressure
 * keeps the packing together, and the second stage relaxes at zero pressure (staged relaxation; common practice).
 */
export const FIRST_STAGE_PRESSURE_GPA = 0.1;
/** 1 GPa in kJ/mol per Å^3 (1e9 J/m^3 x 1e-30 m^3/Å^3 x N_A / 1000). */
const KJ_PER_MOL_A3_PER_GPA = 1e9 * 1e-30 * 6.02214076e23 / 1000;
const DEG = Math.PI / 180;
/**
 * Cell angles the optimiser may reach within one round. A cell drifting past them is usually the same lattice
 * heading for another, more oblique cell choice; the round stops there and the cell is re-chosen (reduceCell).
 */
const MIN_ANGLE_DEG = 15;

/** One packing as the optimiser sees it. */
export interface RigidState {
  group: GeneratedGroup;
  /** a, b, c (Å), alpha, beta, gamma (degrees). */
  cell: [number, number, number, number, number, number];
  /** Fractional coordinates of the molecule's centroid. */
  centreFrac: [number, number, number];
  /** Rotation applied to the template's Cartesian coordinates (row-major 3x3). */
  orient: number[];
}

/** Everything fixed for one molecule and group, with scratch space reused by every evaluation. */
export interface RelaxModel {
  group: GeneratedGroup;
  mol: MoleculeTemplate;
  table: PairTable;
  ops: Op[];
  /** Cell parameters that move, as indices into the cell array. */
  freeCell: number[];
  ws: EnergyWorkspace;
  grad: EnergyGradient;
  offsets: Float64Array;
  /** External pressure in kJ/mol per Å^3 added as P V / Z to the objective (0 for the lattice energy itself). */
  pressure: number;
}

export function makeRelaxModel(group: GeneratedGroup, mol: MoleculeTemplate, table: PairTable = pairTable(mol)): RelaxModel {
  const ops = groupOps(group);
  const system = GROUPS[group].system;
  const freeCell = system === 'triclinic' ? [0, 1, 2, 3, 4, 5] : system === 'monoclinic' ? [0, 1, 2, 4] : [0, 1, 2];
  return {
    group,
    mol,
    table,
    ops,
    freeCell,
    ws: makeWorkspace(mol.elements.length, ops.length),
    grad: { dBasis: new Float64Array(9), dCentreFrac: new Float64Array(3), torque: new Float64Array(3) },
    offsets: new Float64Array(mol.xyz.length),
    pressure: 0,
  };
}

/** Lattice energy per molecule (kJ/mol) of a state. */
export function stateEnergy(model: RelaxModel, s: RigidState): number {
  rotateTemplate(model, s.orient);
  return latticeEnergy(model.table, model.ops, basisFromCell(...s.cell), s.centreFrac, model.offsets, model.ws);
}

/** The optimiser's variables for a state, taking the state's orientation as the reference (rotation vector 0). */
export function variablesOf(model: RelaxModel, s: RigidState): Float64Array {
  const nc = model.freeCell.length;
  const x = new Float64Array(nc + 6);
  model.freeCell.forEach((p, k) => (x[k] = p < 3 ? s.cell[p] : s.cell[p] * DEG * ANGLE_SCALE));
  for (let r = 0; r < 3; r++) x[nc + r] = s.centreFrac[r] * CENTRE_SCALE;
  return x;
}

/** The state the variables describe, with `reference` the state they were made from. */
export function stateOf(model: RelaxModel, reference: RigidState, x: Float64Array): RigidState {
  const nc = model.freeCell.length;
  const cell = reference.cell.slice() as RigidState['cell'];
  model.freeCell.forEach((p, k) => (cell[p] = p < 3 ? x[k] : x[k] / ANGLE_SCALE / DEG));
  const centreFrac: RigidState['centreFrac'] = [x[nc] / CENTRE_SCALE, x[nc + 1] / CENTRE_SCALE, x[nc + 2] / CENTRE_SCALE];
  const w = [x[nc + 3] / ROTATION_SCALE, x[nc + 4] / ROTATION_SCALE, x[nc + 5] / ROTATION_SCALE];
  const orient = mul3(expRotation(w), reference.orient);
  return { group: reference.group, cell, centreFrac, orient };
}

/**
 * Energy (kJ/mol) at variables x around `reference`, with the gradient written into g when given. Returns +Infinity
 * for collapsed packings and impossible cells (non-positive lengths, angles that close no cell).
 */
export function energyAt(model: RelaxModel, reference: RigidState, x: Float64Array, g?: Float64Array): number {
  const s = stateOf(model, reference, x);
  if (!validCell(s.cell)) return Infinity;
  rotateTemplate(model, s.orient);
  const basis = basisFromCell(...s.cell);
  let e = latticeEnergy(model.table, model.ops, basis, s.centreFrac, model.offsets, model.ws, g ? model.grad : undefined);
  // Enthalpy term P V / Z, with dV/dL = V L^-T.
  const volumePerMolecule = Math.abs(det3(basis)) / model.ops.length;
  if (model.pressure !== 0) e += model.pressure * volumePerMolecule;
  if (!g || !Number.isFinite(e)) return e;
  const gb = model.grad.dBasis;
  if (model.pressure !== 0) {
    const inv = model.ws.inv;
    for (let k = 0; k < 3; k++) for (let l = 0; l < 3; l++) gb[3 * k + l] += model.pressure * volumePerMolecule * inv[3 * l + k];
  }
  const nc = model.freeCell.length;
  // Cell parameters: dE/dp = sum dE/dL : dL/dp (lengths scale their basis row; angles by central differences).
  model.freeCell.forEach((p, k) => {
    if (p < 3) {
      let s2 = 0;
      for (let c = 0; c < 3; c++) s2 += gb[3 * p + c] * basis[3 * p + c];
      g[k] = s2 / s.cell[p];
    } else {
      const h = 1e-6;
      const up = s.cell.slice() as RigidState['cell'];
      const dn = s.cell.slice() as RigidState['cell'];
      up[p] += h / DEG;
      dn[p] -= h / DEG;
      const bu = basisFromCell(...up);
      const bd = basisFromCell(...dn);
      let s2 = 0;
      for (let c = 0; c < 9; c++) s2 += (gb[c] * (bu[c] - bd[c])) / (2 * h);
      g[k] = s2 / ANGLE_SCALE;
    }
  });
  for (let r = 0; r < 3; r++) g[nc + r] = model.grad.dCentreFrac[r] / CENTRE_SCALE;
  // Rotation vector w (R = exp(w) R0): dE/dw = J_l(w)^T torque, J_l the left Jacobian of the exponential map.
  const w = [x[nc + 3] / ROTATION_SCALE, x[nc + 4] / ROTATION_SCALE, x[nc + 5] / ROTATION_SCALE];
  const j = leftJacobian(w);
  const t = model.grad.torque;
  for (let r = 0; r < 3; r++) g[nc + 3 + r] = (j[r] * t[0] + j[3 + r] * t[1] + j[6 + r] * t[2]) / ROTATION_SCALE;
  return e;
}

export interface RelaxOutcome {
  state: RigidState;
  startEnergyKjPerMol: number;
  energyKjPerMol: number;
  lbfgs: LbfgsResult;
}

/**
 * Relax a start: a first L-BFGS round under FIRST_STAGE_PRESSURE_GPA, then rounds at zero pressure. Each round
 * runs on the rotation vector around the orientation the previous round ended in (so the exponential map stays
 * well conditioned after large turns); rounds repeat while one stops short of the tolerance, within MAX_ITERATIONS.
 */
export function relaxState(model: RelaxModel, start: RigidState): RelaxOutcome {
  const startEnergy = stateEnergy(model, start);
  let reference = start;
  let total = 0;
  let evaluations = 0;
  let result: LbfgsResult | null = null;
  for (let round = 0; round < 6 && total < MAX_ITERATIONS; round++) {
    const ref = reference;
    // Round 0 under the first-stage pressure, later rounds at zero pressure.
    model.pressure = round === 0 ? FIRST_STAGE_PRESSURE_GPA * KJ_PER_MOL_A3_PER_GPA : 0;
    result = lbfgs((x, g) => energyAt(model, ref, x, g), variablesOf(model, ref), {
      // The pressure stage only has to bring the packing together; the tolerance is met at zero pressure.
      gradientTolerance: round === 0 ? 25 * GRADIENT_TOLERANCE : GRADIENT_TOLERANCE,
      maxIterations: MAX_ITERATIONS - total,
      maxStep: 2,
    });
    total += result.iterations;
    evaluations += result.evaluations;
    if (!Number.isFinite(result.value)) break;
    const ended = stateOf(model, ref, result.x);
    // A converged zero-pressure round ends the relaxation in the cell it ended in; otherwise the next round
    // starts from a less oblique cell of the same lattice.
    if (round > 0 && result.converged) {
      reference = ended;
      break;
    }
    reference = reduceCell(model, ended);
  }
  model.pressure = 0;
  const r = result!;
  return {
    state: reference,
    startEnergyKjPerMol: startEnergy,
    energyKjPerMol: stateEnergy(model, reference),
    lbfgs: { ...r, iterations: total, evaluations },
  };
}

/**
 * The same crystal in a less oblique cell: unit shears of the basis (b_i += s b_j) applied greedily while they
 * shorten the sum of the cell lengths (a Gauss-style reduction; common practice). Monoclinic cells only take
 * a += 2s c and c += 2s a, which keep b unique and every operation of the groups used here (an odd multiple
 * would turn a c glide into an n glide); orthorhombic cells are left alone. Cartesian positions are kept: the
 * centre's fractional coordinates follow the new basis and the orientation follows the new Cartesian frame.
 */
export function reduceCell(model: RelaxModel, s: RigidState): RigidState {
  const system = GROUPS[model.group].system;
  if (system === 'orthorhombic') return s;
  const shears: Mat3[] = [];
  const pairs = system === 'monoclinic' ? [[0, 2], [2, 0]] : [[0, 1], [0, 2], [1, 0], [1, 2], [2, 0], [2, 1]];
  const step = system === 'monoclinic' ? 2 : 1;
  for (const [i, j] of pairs)
    for (const sign of [-1, 1]) {
      const p = [1, 0, 0, 0, 1, 0, 0, 0, 1];
      p[3 * i + j] = sign * step;
      shears.push(p);
    }
  let basis: Mat3 = basisFromCell(...s.cell);
  let total: Mat3 = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  const lengthSum = (b: Mat3) => Math.hypot(b[0], b[1], b[2]) + Math.hypot(b[3], b[4], b[5]) + Math.hypot(b[6], b[7], b[8]);
  for (let pass = 0; pass < 50; pass++) {
    let best: Mat3 | null = null;
    let bestSum = lengthSum(basis) - 1e-9;
    for (const p of shears) {
      const sum = lengthSum(matMul(p, basis));
      if (sum < bestSum) {
        bestSum = sum;
        best = p;
      }
    }
    if (!best) break;
    basis = matMul(best, basis);
    total = matMul(best, total);
  }
  if (total.every((v, k) => v === (k % 4 === 0 ? 1 : 0))) return s;
  // New cell in the standard frame (a along x, b in the xy plane): B' = L' Q with Q a rotation.
  const cell = cellFromBasis(basis) as RigidState['cell'];
  const q = matMul(inverse(basis), basisFromCell(...cell));
  // f' = f P^-1; orientation R' = Q^T R (Cartesian rows x -> x Q).
  const pInv = inverse(total);
  const f = s.centreFrac;
  const centreFrac: RigidState['centreFrac'] = [0, 1, 2].map((c) => f[0] * pInv[c] + f[1] * pInv[3 + c] + f[2] * pInv[6 + c]) as RigidState['centreFrac'];
  const qt = [q[0], q[3], q[6], q[1], q[4], q[7], q[2], q[5], q[8]];
  return { group: s.group, cell, centreFrac, orient: mul3(qt, s.orient) };
}

/** True when the six parameters describe a cell (positive lengths, angles that close a parallelepiped). */
export function validCell(c: readonly number[]): boolean {
  if (!(c[0] > 0.5 && c[1] > 0.5 && c[2] > 0.5)) return false;
  const [ca, cb, cg] = [Math.cos(c[3] * DEG), Math.cos(c[4] * DEG), Math.cos(c[5] * DEG)];
  if (![c[3], c[4], c[5]].every((a) => a > MIN_ANGLE_DEG && a < 180 - MIN_ANGLE_DEG)) return false;
  return 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg > 1e-3;
}

function det3(a: readonly number[]): number {
  return a[0] * (a[4] * a[8] - a[5] * a[7]) - a[1] * (a[3] * a[8] - a[5] * a[6]) + a[2] * (a[3] * a[7] - a[4] * a[6]);
}

function rotateTemplate(model: RelaxModel, orient: readonly number[]): void {
  const m = model.mol.xyz;
  const p = model.offsets;
  for (let i = 0; i < m.length / 3; i++)
    for (let r = 0; r < 3; r++) p[3 * i + r] = orient[3 * r] * m[3 * i] + orient[3 * r + 1] * m[3 * i + 1] + orient[3 * r + 2] * m[3 * i + 2];
}

/** Rotation matrix exp([w]x) (Rodrigues' formula; common practice). */
export function expRotation(w: readonly number[]): number[] {
  const th = Math.hypot(w[0], w[1], w[2]);
  const a = th < 1e-8 ? 1 - (th * th) / 6 : Math.sin(th) / th;
  const b = th < 1e-8 ? 0.5 - (th * th) / 24 : (1 - Math.cos(th)) / (th * th);
  const k = skew(w);
  const k2 = mul3(k, k);
  return [0, 1, 2, 3, 4, 5, 6, 7, 8].map((i) => (i % 4 === 0 ? 1 : 0) + a * k[i] + b * k2[i]);
}

/** Left Jacobian of SO(3): exp(w + dw) = exp(J dw) exp(w) to first order (common practice in rigid-body optimisation). */
function leftJacobian(w: readonly number[]): number[] {
  const th = Math.hypot(w[0], w[1], w[2]);
  const b = th < 1e-4 ? 0.5 - (th * th) / 24 : (1 - Math.cos(th)) / (th * th);
  const c = th < 1e-4 ? 1 / 6 - (th * th) / 120 : (th - Math.sin(th)) / (th * th * th);
  const k = skew(w);
  const k2 = mul3(k, k);
  return [0, 1, 2, 3, 4, 5, 6, 7, 8].map((i) => (i % 4 === 0 ? 1 : 0) + b * k[i] + c * k2[i]);
}

function skew(w: readonly number[]): number[] {
  return [0, -w[2], w[1], w[2], 0, -w[0], -w[1], w[0], 0];
}

function mul3(a: readonly number[], b: readonly number[]): number[] {
  const out = new Array<number>(9).fill(0);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) out[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
  return out;
}
