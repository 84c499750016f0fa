// Symmetry operations on fractional coordinates: parsing the CIF `x,y,z` form, composing,
// closing a set of generators into a group, canonical form, and building the operations of a
// space group from its symbol (./space-group-symbol.ts finds the setting, ./hall.ts builds its operations).
// CIF 1.1 (IUCr standard) defines `_space_group_symop_operation_xyz` / `_symmetry_equiv_pos_as_xyz`.
import type { SymOp } from '../types.js';
import { opsFromHall } from './hall.js';
import { settingFromSymbol } from './space-group-symbol.js';

/** Largest group we ever build: 48 point operations times 4 centring translations (Fm-3m). */
const MAX_GROUP_ORDER = 192;

/** Translations are compared on this grid (1e-6 of a cell edge): far finer than any real translation part. */
const TRANSLATION_KEY_SCALE = 1e6;

export function identityOp(): SymOp {
  return { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] };
}

/**
 * Parse one operation in CIF `x,y,z` form, e.g. `-x+1/2, y+0.5, -z`, `1/2+x`, `x-y,x,z+1/6`, `X,Y,Z`.
 * Throws an Error with a readable message when the text is not such an operation.
 */
export function parseSymopXyz(text: string): SymOp {
  let body = text.trim();
  // Some writers quote the whole operation; the reader normally strips quotes, but be lenient.
  if (body.length >= 2 && (body[0] === "'" || body[0] === '"') && body[body.length - 1] === body[0]) {
    body = body.slice(1, -1).trim();
  }
  const parts = body.split(',');
  if (parts.length !== 3) {
    throw new Error(`symmetry operation '${text}' must have three comma-separated parts (like 'x,y,z'), found ${parts.length}`);
  }
  const rot = new Array<number>(9).fill(0);
  const trans = [0, 0, 0];
  for (let r = 0; r < 3; r++) {
    parseComponent(parts[r]!, text, r, rot, trans);
  }
  // A crystallographic rotation has integer entries and determinant +1 or -1.
  for (const v of rot) {
    if (!Number.isInteger(v)) throw new Error(`symmetry operation '${text}' has a non-integer coefficient ${v} on x, y or z`);
  }
  const det = det3(rot);
  if (det !== 1 && det !== -1) {
    throw new Error(`symmetry operation '${text}' is not a crystallographic operation (determinant of its rotation part is ${det}, not +1 or -1)`);
  }
  return { rot, trans };
}

/** Apply `op` to fractional coordinates `p` (no wrapping). */
export function applyOp(op: SymOp, p: ArrayLike<number>): [number, number, number] {
  const R = op.rot;
  return [
    R[0]! * p[0]! + R[1]! * p[1]! + R[2]! * p[2]! + op.trans[0]!,
    R[3]! * p[0]! + R[4]! * p[1]! + R[5]! * p[2]! + op.trans[1]!,
    R[6]! * p[0]! + R[7]! * p[1]! + R[8]! * p[2]! + op.trans[2]!,
  ];
}

/** The product a∘b: first apply b, then a. */
export function composeOps(a: SymOp, b: SymOp): SymOp {
  const rot = new Array<number>(9);
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      rot[3 * i + j] = a.rot[3 * i]! * b.rot[j]! + a.rot[3 * i + 1]! * b.rot[3 + j]! + a.rot[3 * i + 2]! * b.rot[6 + j]!;
    }
  }
  const trans = applyOp(a, b.trans);
  return { rot, trans };
}

/** The inverse operation (rotation parts are integer with determinant ±1, so the inverse is integer too). */
export function invertOp(op: SymOp): SymOp {
  const m = op.rot;
  const det = det3(m);
  const inv = [
    m[4]! * m[8]! - m[5]! * m[7]!, m[2]! * m[7]! - m[1]! * m[8]!, m[1]! * m[5]! - m[2]! * m[4]!,
    m[5]! * m[6]! - m[3]! * m[8]!, m[0]! * m[8]! - m[2]! * m[6]!, m[2]! * m[3]! - m[0]! * m[5]!,
    m[3]! * m[7]! - m[4]! * m[6]!, m[1]! * m[6]! - m[0]! * m[7]!, m[0]! * m[4]! - m[1]! * m[3]!,
  ].map((v) => v / det + 0);
  const rinv: SymOp = { rot: inv, trans: [0, 0, 0] };
  const t = applyOp(rinv, op.trans);
  return { rot: inv, trans: [-t[0] + 0, -t[1] + 0, -t[2] + 0] };
}

/** Canonical form: same rotation, translation wrapped to [0,1) (values within 1e-9 of 1 become 0). */
export function canonicalOp(op: SymOp): SymOp {
  return { rot: op.rot.map((v) => v + 0), trans: op.trans.map(wrapUnit) };
}

/** A string key equal for two operations exactly when they agree modulo lattice translations. */
export function opKey(op: SymOp): string {
  const t = op.trans.map((v) => {
    const k = Math.round(wrapUnit(v) * TRANSLATION_KEY_SCALE);
    return k === TRANSLATION_KEY_SCALE ? 0 : k;
  });
  return `${op.rot.join(',')}|${t.join(',')}`;
}

/**
 * Close a set of operations into a group modulo lattice translations (the identity is added).
 * Returns canonical operations, identity first, then in order of discovery.
 * Throws when the set generates more than 192 operations (the operations are then not a space group,
 * e.g. a translation like x+0.1 that never closes).
 */
export function closeGroup(ops: SymOp[]): SymOp[] {
  const out: SymOp[] = [identityOp()];
  const seen = new Set<string>([opKey(out[0]!)]);
  const gens = ops.map(canonicalOp);
  for (const g of gens) {
    const k = opKey(g);
    if (!seen.has(k)) {
      seen.add(k);
      out.push(g);
    }
  }
  // Multiply every element by every generator until nothing new appears.
  for (let i = 0; i < out.length; i++) {
    for (const g of gens) {
      const p = canonicalOp(composeOps(out[i]!, g));
      const k = opKey(p);
      if (seen.has(k)) continue;
      seen.add(k);
      out.push(p);
      if (out.length > MAX_GROUP_ORDER) {
        throw new Error(`the symmetry operations generate more than ${MAX_GROUP_ORDER} operations, so they do not form a space group`);
      }
    }
  }
  return out;
}

/** True when the operations are closed under composition modulo lattice translations. */
export function isClosedGroup(ops: SymOp[]): boolean {
  const keys = new Set(ops.map(opKey));
  for (const a of ops) for (const b of ops) if (!keys.has(opKey(composeOps(a, b)))) return false;
  return true;
}

/** Format an operation in `x,y,z` form with fractions (for notes and debugging). */
export function formatOpXyz(op: SymOp): string {
  const c = canonicalOp(op);
  const names = ['x', 'y', 'z'];
  const parts: string[] = [];
  for (let r = 0; r < 3; r++) {
    let s = '';
    for (let j = 0; j < 3; j++) {
      const v = c.rot[3 * r + j]!;
      if (v === 0) continue;
      const sign = v < 0 ? '-' : s === '' ? '' : '+';
      s += `${sign}${Math.abs(v) === 1 ? '' : Math.abs(v)}${names[j]}`;
    }
    const t = c.trans[r]!;
    if (t !== 0) s += `+${fraction(t)}`;
    parts.push(s === '' ? '0' : s);
  }
  return parts.join(',');
}

/**
 * The full operation list of the space-group setting a Hermann–Mauguin symbol names, built from the setting's
 * Hall symbol and closed into a group; null when the text names no setting. Every setting of International
 * Tables and every common spelling is read (`P 21/c`, `P 1 21/c 1`, `P2_1/c`, `Fm-3m`, `R -3 c:H`; see
 * ./space-group-symbol.ts). Where the symbol leaves the setting open and no cell is given, the International
 * Tables default is taken; `settingFromSymbol` says so and takes the cell into account.
 */
export function opsFromSymbol(symbol: string): SymOp[] | null {
  const r = settingFromSymbol(symbol);
  return r === null ? null : opsFromHall(r.setting.hall);
}

// ---- helpers ----

function parseComponent(part: string, whole: string, row: number, rot: number[], trans: number[]): void {
  const s = part.replace(/\s+/g, '').toLowerCase();
  if (s === '') throw new Error(`symmetry operation '${whole}': part ${row + 1} is empty`);
  // A term: optional sign, optional number or fraction, optional '*', optional variable.
  const term = /([+-]?)(\d+(?:\.\d*)?|\.\d+)?(?:\/(\d+(?:\.\d*)?))?(\*?)([xyz]?)/y;
  let pos = 0;
  let nTerms = 0;
  while (pos < s.length) {
    term.lastIndex = pos;
    const m = term.exec(s);
    if (m === null || m[0] === '' || (m[1] === '' && nTerms > 0)) {
      throw new Error(`symmetry operation '${whole}': cannot read part ${row + 1} ('${part.trim()}') at '${s.slice(pos)}'`);
    }
    const [, sign, num, den, star, variable] = m;
    if (num === undefined && den !== undefined) throw new Error(`symmetry operation '${whole}': bad fraction in '${part.trim()}'`);
    if (star === '*' && (num === undefined || variable === '')) {
      throw new Error(`symmetry operation '${whole}': misplaced '*' in '${part.trim()}'`);
    }
    if (num === undefined && variable === '') {
      throw new Error(`symmetry operation '${whole}': a sign with nothing after it in '${part.trim()}'`);
    }
    let value = num === undefined ? 1 : Number(num);
    if (den !== undefined) {
      const d = Number(den);
      if (d === 0) throw new Error(`symmetry operation '${whole}': division by zero in '${part.trim()}'`);
      value /= d;
    }
    if (sign === '-') value = -value;
    if (variable === '') trans[row] = trans[row]! + value;
    else {
      const col = variable === 'x' ? 0 : variable === 'y' ? 1 : 2;
      rot[3 * row + col] = rot[3 * row + col]! + value;
    }
    pos += m[0].length;
    nTerms++;
  }
}

function det3(m: ArrayLike<number>): number {
  return (
    m[0]! * (m[4]! * m[8]! - m[5]! * m[7]!) -
    m[1]! * (m[3]! * m[8]! - m[5]! * m[6]!) +
    m[2]! * (m[3]! * m[7]! - m[4]! * m[6]!)
  );
}

function wrapUnit(v: number): number {
  let w = v - Math.floor(v);
  if (w > 1 - 1e-9 || w < 1e-9) w = 0;
  return w + 0;
}

function fraction(t: number): string {
  for (const d of [2, 3, 4, 6, 8, 12, 24]) {
    const n = Math.round(t * d);
    if (Math.abs(n / d - t) < 1e-9) return `${n}/${d}`;
  }
  return String(t);
}
