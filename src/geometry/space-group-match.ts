// Which of the 230 space groups a set of operations is, and the change of basis and origin that bring it to
// that group's default setting of International Tables. The operations (W, t) are given in a primitive cell;
// for each candidate conventional cell (./conventional-axes.ts) they are rewritten there, their rotations
// compared with those of every group of the same crystal class in its default setting (built from the Hall
// symbol, ./space-group-table.ts), and for a group whose rotations agree an origin shift p with
// t + (I - W) p = t_default (modulo the centred lattice) is sought (./congruence.ts). A group type is fixed by
// its operations up to change of basis and origin, so the first group that fits is the answer.
// Method after R. W. Grosse-Kunstleve, "Algorithms for deriving crystallographic space-group information",
// Acta Cryst. A 55 (1999) 383-395.
import type { SymOp } from '../types.js';
import { classKey, crystalSystem, type CrystalSystem } from './point-group.js';
import { conventionalCandidates } from './conventional-axes.js';
import { defaultSetting, settingOperations, type SpaceGroupSetting } from './space-group-table.js';
import { solveModOne } from './congruence.js';
import { inverse } from './reduce.js';
import { mul3, mulVec3, roundedInteger3, transpose3, wrappedLength2 } from './matrix3.js';

export interface GroupMatch {
  setting: SpaceGroupSetting;
  system: CrystalSystem;
  /** Rows: conventional a, b, c in coordinates of the primitive basis (integer, det = lattice points per conventional cell). */
  conventional: number[];
  /** Origin shift in conventional fractional coordinates: x_standard = M^-T x_primitive + originShift. */
  originShift: [number, number, number];
}

interface Target {
  setting: SpaceGroupSetting;
  centring: string;
  /** Rotation code -> translation of one operation with that rotation. */
  byRotation: Map<number, number[]>;
  rotationCodes: string;
  /** Centring translations, the zero vector first. */
  centrings: number[][];
}

let targetsByClass: Map<string, Target[]> | null = null;

/**
 * Identify the group of operations `ops` (rotation on fractional columns, translation) given in the cell with
 * basis rows `basis` (Å). Translations are compared in Å after conversion, within `toleranceAngstrom`.
 * Returns null when no group fits (operations that do not form a space group within the tolerance).
 */
export function matchSpaceGroup(ops: SymOp[], basis: ArrayLike<number>, toleranceAngstrom: number): GroupMatch | null {
  const rotations = ops.map((o) => o.rot);
  const key = classKey(rotations);
  const targets = classTargets().get(key);
  if (targets === undefined) return null;
  const system = crystalSystem(rotations);
  for (const m of conventionalCandidates(system, rotations, basis)) {
    const mInvT = transpose3(inverse(m, 3));
    const mT = transpose3(m);
    // The operations in the conventional cell: W_c = M^-T W M^T, t_c = M^-T t (integer rotations only).
    const conv: { rot: number[]; trans: number[]; code: number }[] = [];
    let integral = true;
    for (const o of ops) {
      const w = roundedInteger3(mul3(mul3(mInvT, o.rot), mT));
      if (w === null) {
        integral = false;
        break;
      }
      conv.push({ rot: w, trans: mulVec3(mInvT, o.trans), code: rotationCode(w) });
    }
    if (!integral || conv.some((c) => c.code < 0)) continue;
    const centring = centringOf(mInvT);
    if (centring === null) continue;
    const codes = conv.map((c) => c.code).sort((a, b) => a - b).join(',');
    const cartesian = mul3(m, basis);
    for (const target of targets) {
      if (target.centring !== centring.letter || target.rotationCodes !== codes) continue;
      const shift = originShift(conv, target, cartesian, toleranceAngstrom);
      if (shift !== null) return { setting: target.setting, system, conventional: m, originShift: shift };
    }
  }
  return null;
}

/** Every group's default setting, grouped by crystal class, built once. */
function classTargets(): Map<string, Target[]> {
  if (targetsByClass !== null) return targetsByClass;
  targetsByClass = new Map();
  for (let n = 1; n <= 230; n++) {
    const setting = defaultSetting(n);
    const ops = settingOperations(setting);
    const byRotation = new Map<number, number[]>();
    const centrings: number[][] = [];
    for (const o of ops) {
      const code = rotationCode(o.rot);
      if (!byRotation.has(code)) byRotation.set(code, o.trans.slice());
      if (code === IDENTITY_CODE) centrings.push(o.trans.slice());
    }
    const rotations = [...byRotation.keys()].map(decodeRotation);
    const key = classKey(rotations);
    const letter = setting.hall.replace(/^-/, '')[0].toUpperCase();
    const target: Target = {
      setting,
      centring: letter,
      byRotation,
      rotationCodes: [...byRotation.keys()].sort((a, b) => a - b).join(','),
      centrings,
    };
    const list = targetsByClass.get(key) ?? [];
    list.push(target);
    targetsByClass.set(key, list);
  }
  return targetsByClass;
}

/**
 * The origin shift p that turns the conventional operations into the target's (t + (I - W) p = t_target
 * modulo the centred lattice), or null. Generators are solved first, trying each centring translation on
 * each; a solution is accepted when every operation then agrees within the tolerance (Å).
 */
function originShift(
  conv: { rot: number[]; trans: number[]; code: number }[], target: Target, cartesian: number[], toleranceAngstrom: number,
): [number, number, number] | null {
  const gens = generators(conv);
  const choices = target.centrings.length;
  let combos = 1;
  for (let g = 0; g < gens.length; g++) combos *= choices;
  for (let combo = 0; combo < combos; combo++) {
    const a: number[][] = [];
    const b: number[] = [];
    let rest = combo;
    for (const g of gens) {
      const c = target.centrings[rest % choices];
      rest = Math.floor(rest / choices);
      const want = target.byRotation.get(g.code)!;
      for (let r = 0; r < 3; r++) {
        a.push([(r === 0 ? 1 : 0) - g.rot[3 * r], (r === 1 ? 1 : 0) - g.rot[3 * r + 1], (r === 2 ? 1 : 0) - g.rot[3 * r + 2]]);
        b.push(want[r] + c[r] - g.trans[r]);
      }
    }
    const p = solveModOne(a, b, 0.1);
    if (p !== null && agrees(conv, target, p, cartesian, toleranceAngstrom)) return [wrap(p[0]), wrap(p[1]), wrap(p[2])];
  }
  return null;
}

/** Every operation, shifted by p, equals the target's operation with its rotation modulo the centred lattice. */
function agrees(
  conv: { rot: number[]; trans: number[]; code: number }[], target: Target, p: number[], cartesian: number[], toleranceAngstrom: number,
): boolean {
  const tol2 = toleranceAngstrom * toleranceAngstrom;
  for (const o of conv) {
    const want = target.byRotation.get(o.code)!;
    const wp = mulVec3(o.rot, p);
    let best = Infinity;
    for (const c of target.centrings) {
      const gap2 = wrappedLength2(
        o.trans[0] + p[0] - wp[0] - want[0] - c[0], o.trans[1] + p[1] - wp[1] - want[1] - c[1], o.trans[2] + p[2] - wp[2] - want[2] - c[2], cartesian,
      );
      best = Math.min(best, gap2);
    }
    if (best > tol2) return false;
  }
  return true;
}

/** A few operations whose rotations generate all the rotations (at most three for any point group). */
function generators<T extends { rot: number[]; code: number }>(conv: T[]): T[] {
  const all = new Set(conv.map((c) => c.code));
  const gens: T[] = [];
  let reached = new Set<number>([IDENTITY_CODE]);
  for (const c of conv) {
    if (reached.size === all.size) break;
    if (reached.has(c.code)) continue;
    gens.push(c);
    reached = closeRotations(gens.map((g) => g.rot));
  }
  return gens;
}

function closeRotations(gens: number[][]): Set<number> {
  const seen = new Map<number, number[]>([[IDENTITY_CODE, [1, 0, 0, 0, 1, 0, 0, 0, 1]]]);
  const queue = [...seen.values()];
  while (queue.length > 0) {
    const w = queue.pop()!;
    for (const g of gens) {
      const p = mul3(w, g);
      const code = rotationCode(p);
      if (code >= 0 && !seen.has(code)) {
        seen.set(code, p);
        queue.push(p);
      }
    }
  }
  return new Set(seen.keys());
}

/** Centring of the conventional cell: the primitive basis vectors written in it, closed under addition mod 1. */
function centringOf(mInvT: number[]): { letter: string } | null {
  const vecs: number[][] = [[0, 0, 0]];
  const key = (v: number[]) => v.map((x) => Math.round(wrap(x) * 12) % 12).join(',');
  const seen = new Set<string>([key([0, 0, 0])]);
  for (let i = 0; i < vecs.length; i++) {
    for (let e = 0; e < 3; e++) {
      const col = [mInvT[e], mInvT[3 + e], mInvT[6 + e]];
      const v = vecs[i].map((x, r) => wrap(x + col[r]));
      const k = key(v);
      if (!seen.has(k)) {
        seen.add(k);
        vecs.push(v);
        if (vecs.length > 4) return null;
      }
    }
  }
  const set = [...seen].filter((k) => k !== '0,0,0').sort().join(';');
  const letter = CENTRING_PATTERNS[set];
  return letter === undefined ? null : { letter };
}

// Centring translations in twelfths of a cell edge (Hall, Acta Cryst. A 37, 1981, Table 1; R obverse).
const CENTRING_PATTERNS: Record<string, string> = {
  '': 'P',
  '0,6,6': 'A',
  '6,0,6': 'B',
  '6,6,0': 'C',
  '6,6,6': 'I',
  '0,6,6;6,0,6;6,6,0': 'F',
  '4,8,8;8,4,4': 'R',
};

const IDENTITY_CODE = rotationCode([1, 0, 0, 0, 1, 0, 0, 0, 1]);

/** Base-3 code of a rotation with entries in {-1, 0, 1}; -1 for any other. */
function rotationCode(w: ArrayLike<number>): number {
  let code = 0;
  for (let i = 0; i < 9; i++) {
    const e = w[i];
    if (e < -1 || e > 1) return -1;
    code = code * 3 + (e + 1);
  }
  return code;
}

function decodeRotation(code: number): number[] {
  const out = new Array<number>(9);
  for (let i = 8; i >= 0; i--) {
    out[i] = (code % 3) - 1;
    code = Math.floor(code / 3);
  }
  return out;
}

function wrap(v: number): number {
  const w = v - Math.floor(v);
  return w >= 1 - 1e-12 ? 0 : w + 0;
}
