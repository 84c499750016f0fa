// Symmetry operations of the common space groups of organic crystals in their standard settings
// (International Tables for Crystallography, Vol. A: P21/c unique axis b cell choice 1, P-1, P212121,
// C2/c unique axis b cell choice 1, P21 unique axis b, Pbca, Pna21). Used by the generator only.

export type GeneratedGroup = 'P21/c' | 'P-1' | 'P212121' | 'C2/c' | 'P21' | 'Pbca' | 'Pna21';

export interface GroupOps {
  /** Hermann–Mauguin symbol as written in a CIF (full symbol for monoclinic groups). */
  symbol: string;
  system: 'triclinic' | 'monoclinic' | 'orthorhombic';
  /** x,y,z strings of the International Tables. */
  xyz: string[];
}

const P21C = ['x,y,z', '-x,y+1/2,-z+1/2', '-x,-y,-z', 'x,-y+1/2,z+1/2'];
const C2C_PRIMITIVE = ['x,y,z', '-x,y,-z+1/2', '-x,-y,-z', 'x,-y,z+1/2'];
const C2C = [...C2C_PRIMITIVE, ...C2C_PRIMITIVE.map((op) => addCentring(op))];

export const GROUPS: Record<GeneratedGroup, GroupOps> = {
  'P21/c': { symbol: 'P 1 21/c 1', system: 'monoclinic', xyz: P21C },
  'P-1': { symbol: 'P -1', system: 'triclinic', xyz: ['x,y,z', '-x,-y,-z'] },
  P212121: {
    symbol: 'P 21 21 21',
    system: 'orthorhombic',
    xyz: ['x,y,z', '-x+1/2,-y,z+1/2', '-x,y+1/2,-z+1/2', 'x+1/2,-y+1/2,-z'],
  },
  'C2/c': { symbol: 'C 1 2/c 1', system: 'monoclinic', xyz: C2C },
  P21: { symbol: 'P 1 21 1', system: 'monoclinic', xyz: ['x,y,z', '-x,y+1/2,-z'] },
  Pbca: {
    symbol: 'P b c a',
    system: 'orthorhombic',
    xyz: [
      'x,y,z', '-x+1/2,-y,z+1/2', '-x,y+1/2,-z+1/2', 'x+1/2,-y+1/2,-z',
      '-x,-y,-z', 'x+1/2,y,-z+1/2', 'x,-y+1/2,z+1/2', '-x+1/2,y+1/2,z',
    ],
  },
  Pna21: {
    symbol: 'P n a 21',
    system: 'orthorhombic',
    xyz: ['x,y,z', '-x,-y,z+1/2', 'x+1/2,-y+1/2,z', '-x+1/2,y+1/2,z+1/2'],
  },
};

/** International Tables number of each generated group. */
export const IT_NUMBER: Record<GeneratedGroup, number> = { 'P21/c': 14, 'P-1': 2, P212121: 19, 'C2/c': 15, P21: 4, Pbca: 61, Pna21: 33 };

/** A parsed operation on fractional coordinates: x' = R x + t. */
export interface Op {
  rot: number[];
  trans: number[];
}

/** Parse the simple x,y,z strings of this table (and those the generator writes). */
export function parseOp(text: string): Op {
  const rot = new Array<number>(9).fill(0);
  const trans = [0, 0, 0];
  const parts = text.split(',');
  if (parts.length !== 3) throw new Error(`not an x,y,z operation: ${text}`);
  parts.forEach((part, row) => {
    const terms = part.replace(/\s+/g, '').match(/[+-]?[^+-]+/g) ?? [];
    for (const term of terms) {
      const sign = term.startsWith('-') ? -1 : 1;
      const body = term.replace(/^[+-]/, '');
      const axis = 'xyz'.indexOf(body);
      if (axis >= 0) rot[3 * row + axis] += sign;
      else if (body.includes('/')) {
        const [p, q] = body.split('/').map(Number);
        trans[row] += (sign * p) / q;
      } else trans[row] += sign * Number(body);
    }
  });
  return { rot, trans };
}

/** Write an operation as x,y,z with translations as fractions of 12 (or decimals when not a twelfth). */
export function formatOp(op: Op): string {
  const rows: string[] = [];
  for (let r = 0; r < 3; r++) {
    let s = '';
    for (let c = 0; c < 3; c++) {
      const v = Math.round(op.rot[3 * r + c]);
      if (v === 0) continue;
      const sym = 'xyz'[c];
      const mag = Math.abs(v) === 1 ? sym : `${Math.abs(v)}*${sym}`;
      s += v < 0 ? `-${mag}` : s === '' ? mag : `+${mag}`;
    }
    let t = op.trans[r] - Math.floor(op.trans[r] + 1e-9);
    if (t > 1 - 1e-9) t = 0;
    if (t > 1e-9) s += `+${fraction(t)}`;
    rows.push(s === '' ? '0' : s);
  }
  return rows.join(',');
}

function fraction(t: number): string {
  const twelfths = Math.round(t * 12);
  if (Math.abs(twelfths - t * 12) > 1e-6) return t.toFixed(6);
  const g = gcd(twelfths, 12);
  return `${twelfths / g}/${12 / g}`;
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

function addCentring(op: string): string {
  const parts = op.split(',');
  return `${parts[0]}+1/2,${parts[1]}+1/2,${parts[2]}`
    .replace('+1/2+1/2', '+1');
}
