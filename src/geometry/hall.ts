// Hall-notation space-group symbols -> generator operations -> closed group.
// Source: S. R. Hall, "Space-group notation with an explicit origin", Acta Cryst. A 37 (1981) 517-525,
// with the tables of International Tables for Crystallography Vol. B (Sect. 1.4, Hall symbols).
//
// A Hall symbol is `[-]L  N1[A1][T1]  [N2[A2][T2]]  [N3[A3][T3]]  [N4...]  [(origin shift)]`:
//   - `-` : the group is centrosymmetric (the inversion -1 is a generator);
//   - L   : lattice centring P A B C I R F (adds centring translations; the rare S and T
//           centrings of Hall's paper are not used by the 530 standard settings and are refused);
//   - each matrix symbol: optional `-` (improper), order N in 1 2 3 4 6, an axis (x y z, ' " for the
//     face diagonals, * for the body diagonal; omitted axes follow Hall's default rules), and
//     translation letters a b c n u v w d or a screw subscript digit;
//   - `(vx vy vz)` shifts the origin by v/12 (or a change of basis in x,y,z form).
import type { SymOp } from '../types.js';
import { closeGroup, composeOps, invertOp, parseSymopXyz } from './symmetry.js';

type Axis = 'x' | 'y' | 'z';

// Rotation matrices (row-major) for the proper rotations along the principal axes, Hall (1981) Table 3.
const PRINCIPAL: Record<Axis, Record<number, number[]>> = {
  x: {
    1: [1, 0, 0, 0, 1, 0, 0, 0, 1],
    2: [1, 0, 0, 0, -1, 0, 0, 0, -1],
    3: [1, 0, 0, 0, 0, -1, 0, 1, -1],
    4: [1, 0, 0, 0, 0, -1, 0, 1, 0],
    6: [1, 0, 0, 0, 1, -1, 0, 1, 0],
  },
  y: {
    1: [1, 0, 0, 0, 1, 0, 0, 0, 1],
    2: [-1, 0, 0, 0, 1, 0, 0, 0, -1],
    3: [-1, 0, 1, 0, 1, 0, -1, 0, 0],
    4: [0, 0, 1, 0, 1, 0, -1, 0, 0],
    6: [0, 0, 1, 0, 1, 0, -1, 0, 1],
  },
  z: {
    1: [1, 0, 0, 0, 1, 0, 0, 0, 1],
    2: [-1, 0, 0, 0, -1, 0, 0, 0, 1],
    3: [0, -1, 0, 1, -1, 0, 0, 0, 1],
    4: [0, -1, 0, 1, 0, 0, 0, 0, 1],
    6: [1, -1, 0, 1, 0, 0, 0, 0, 1],
  },
};

// Two-fold rotations along face diagonals, relative to the preceding (principal) axis, Hall (1981) Table 3.
const FACE_DIAGONAL: Record<Axis, { prime: number[]; dprime: number[] }> = {
  x: { prime: [-1, 0, 0, 0, 0, -1, 0, -1, 0], dprime: [-1, 0, 0, 0, 0, 1, 0, 1, 0] },
  y: { prime: [0, 0, -1, 0, -1, 0, -1, 0, 0], dprime: [0, 0, 1, 0, -1, 0, 1, 0, 0] },
  z: { prime: [0, -1, 0, -1, 0, 0, 0, 0, -1], dprime: [0, 1, 0, 1, 0, 0, 0, 0, -1] },
};

// Three-fold rotation along the body diagonal a+b+c.
const BODY_DIAGONAL_3 = [0, 0, 1, 1, 0, 0, 0, 1, 0];

// Translation symbols, Hall (1981) Table 2.
const TRANSLATION_LETTERS: Record<string, [number, number, number]> = {
  a: [1 / 2, 0, 0],
  b: [0, 1 / 2, 0],
  c: [0, 0, 1 / 2],
  n: [1 / 2, 1 / 2, 1 / 2],
  u: [1 / 4, 0, 0],
  v: [0, 1 / 4, 0],
  w: [0, 0, 1 / 4],
  d: [1 / 4, 1 / 4, 1 / 4],
};

// Lattice centring translations, Hall (1981) Table 1.
const CENTRING: Record<string, [number, number, number][]> = {
  P: [],
  A: [[0, 1 / 2, 1 / 2]],
  B: [[1 / 2, 0, 1 / 2]],
  C: [[1 / 2, 1 / 2, 0]],
  I: [[1 / 2, 1 / 2, 1 / 2]],
  R: [[2 / 3, 1 / 3, 1 / 3], [1 / 3, 2 / 3, 2 / 3]],
  F: [[0, 1 / 2, 1 / 2], [1 / 2, 0, 1 / 2], [1 / 2, 1 / 2, 0]],
};

/** Generators of the group named by a Hall symbol (identity not included, centrings included). */
export function hallGenerators(hall: string): SymOp[] {
  const text = hall.trim();
  // Split off the origin shift / change of basis in parentheses.
  let body = text;
  let shift: SymOp | null = null;
  const paren = text.indexOf('(');
  if (paren >= 0) {
    if (!text.endsWith(')')) throw new Error(`Hall symbol '${hall}': unterminated origin shift`);
    body = text.slice(0, paren).trim();
    shift = parseShift(text.slice(paren + 1, -1), hall);
  }
  const tokens = body.split(/\s+/).filter((t) => t !== '');
  if (tokens.length < 2) throw new Error(`Hall symbol '${hall}': needs a lattice symbol and at least one matrix symbol`);
  const gens: SymOp[] = [];

  // Lattice symbol, with '-' for a centrosymmetric group.
  let lattice = tokens[0]!;
  if (lattice.startsWith('-')) {
    gens.push({ rot: [-1, 0, 0, 0, -1, 0, 0, 0, -1], trans: [0, 0, 0] });
    lattice = lattice.slice(1);
  }
  const centring = CENTRING[lattice.toUpperCase()];
  if (lattice.length !== 1 || centring === undefined) {
    throw new Error(`Hall symbol '${hall}': unknown lattice symbol '${lattice}' (expected one of P A B C I R F)`);
  }
  for (const t of centring) gens.push({ rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [...t] });

  // Matrix symbols, applying Hall's default-axis rules.
  let prevOrder = 0;
  let prevAxis: Axis = 'z';
  const matrices = tokens.slice(1);
  if (matrices.length > 4) throw new Error(`Hall symbol '${hall}': at most four matrix symbols are allowed`);
  matrices.forEach((tok, index) => {
    const m = /^(-?)([12346])([xyz'"*]?)([abcnuvwd1-5]*)$/i.exec(tok);
    if (m === null) throw new Error(`Hall symbol '${hall}': cannot read matrix symbol '${tok}'`);
    const improper = m[1] === '-';
    const order = Number(m[2]);
    const axisSym = m[3]!.toLowerCase();
    const trSym = m[4]!.toLowerCase();
    let rot: number[];
    let axis: Axis | null = null; // principal axis of this matrix, when it has one (for screw parts)
    if (axisSym === 'x' || axisSym === 'y' || axisSym === 'z') {
      axis = axisSym;
      rot = PRINCIPAL[axis][order]!;
    } else if (axisSym === "'" || axisSym === '"') {
      if (order !== 2) throw new Error(`Hall symbol '${hall}': a face-diagonal axis needs a 2-fold, got '${tok}'`);
      rot = axisSym === "'" ? FACE_DIAGONAL[prevAxis].prime : FACE_DIAGONAL[prevAxis].dprime;
    } else if (axisSym === '*') {
      if (order !== 3) throw new Error(`Hall symbol '${hall}': a body-diagonal axis needs a 3-fold, got '${tok}'`);
      rot = BODY_DIAGONAL_3;
    } else if (index === 0) {
      // First matrix: default axis c.
      axis = 'z';
      rot = PRINCIPAL.z[order]!;
    } else if (index === 1 && order === 2) {
      // Second matrix, 2-fold: along a after a 2- or 4-fold, along a-b after a 3- or 6-fold.
      if (prevOrder === 2 || prevOrder === 4) {
        axis = 'x';
        rot = PRINCIPAL.x[2]!;
      } else if (prevOrder === 3 || prevOrder === 6) {
        rot = FACE_DIAGONAL[prevAxis].prime;
      } else {
        throw new Error(`Hall symbol '${hall}': cannot infer the axis of '${tok}'`);
      }
    } else if (order === 3) {
      // Third (or later) 3-fold: along the body diagonal.
      rot = BODY_DIAGONAL_3;
    } else if (order === 1) {
      rot = PRINCIPAL.z[1]!;
    } else {
      throw new Error(`Hall symbol '${hall}': cannot infer the axis of '${tok}'`);
    }
    if (improper) rot = rot.map((v) => -v + 0);

    const trans = [0, 0, 0];
    for (const ch of trSym) {
      const letter = TRANSLATION_LETTERS[ch];
      if (letter !== undefined) {
        for (let i = 0; i < 3; i++) trans[i] = trans[i]! + letter[i]!;
      } else {
        // Screw subscript: k/N of a lattice translation along the rotation axis.
        if (axis === null) throw new Error(`Hall symbol '${hall}': screw subscript on an axis that is not x, y or z in '${tok}'`);
        const k = Number(ch);
        if (k >= order) throw new Error(`Hall symbol '${hall}': screw subscript ${k} is not below the order ${order} in '${tok}'`);
        trans['xyz'.indexOf(axis)] += k / order;
      }
    }
    gens.push({ rot, trans });
    prevOrder = order;
    if (axis !== null) prevAxis = axis;
  });

  if (shift === null) return gens;
  // Change of origin: each operation S becomes V S V^-1 (V = shift).
  const vInv = invertOp(shift);
  return gens.map((g) => composeOps(composeOps(shift!, g), vInv));
}

/** All operations of the group named by a Hall symbol, canonical (translations in [0,1)), identity first. */
export function opsFromHall(hall: string): SymOp[] {
  return closeGroup(hallGenerators(hall));
}

/** `(0 0 1)` in twelfths, or a change of basis in x,y,z form such as `(x,y,z+1/4)`. */
function parseShift(inner: string, hall: string): SymOp {
  const s = inner.trim();
  if (s.includes(',')) return parseSymopXyz(s);
  const parts = s.split(/\s+/);
  if (parts.length !== 3 || parts.some((p) => !/^-?\d+$/.test(p))) {
    throw new Error(`Hall symbol '${hall}': origin shift '(${inner})' must be three integers (twelfths of a cell edge)`);
  }
  return { rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: parts.map((p) => Number(p) / 12) };
}
