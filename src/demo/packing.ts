// Random packings of the rigid molecule in a space group, squeezed until molecules touch: the generator's
// stand-in for a lattice-energy minimum. Contacts are judged against 0.85 x the sum of Bondi van der Waals
// radii ("van der Waals Volumes and Radii", J. Phys. Chem. 1964; the 0.85 factor is common practice).
import type { Rng } from './prng.js';
import type { MoleculeTemplate } from './molecule.js';
import { GROUPS, parseOp, type GeneratedGroup, type Op } from './space-groups.js';
import { basisFromCell, det, inverse, rotation, vecMat, type Mat3, type Vec3 } from './mat3.js';

/** Bondi van der Waals radii in Å (J. Phys. Chem. 1964). */
const VDW_RADIUS: Record<string, number> = { H: 1.2, C: 1.7, N: 1.55, O: 1.52 };
const CONTACT_FACTOR = 0.85;
const AVOGADRO = 6.02214076e23;

export interface Packing {
  group: GeneratedGroup;
  /** a, b, c in Å and alpha, beta, gamma in degrees, standard setting. */
  cell: [number, number, number, number, number, number];
  /** Fractional coordinates of the molecule (one asymmetric unit), 3 per atom, molecule kept whole. */
  frac: Float64Array;
  densityGPerCm3: number;
}

/** Operations of a generated group, parsed. */
export function groupOps(group: GeneratedGroup): Op[] {
  return GROUPS[group].xyz.map(parseOp);
}

export function packingDensity(p: Packing, mol: MoleculeTemplate): number {
  const basis = basisFromCell(...p.cell);
  const z = GROUPS[p.group].xyz.length;
  return (z * mol.massGPerMol) / (AVOGADRO * det(basis) * 1e-24);
}

/**
 * Smallest ratio (distance / allowed contact) over all pairs of atoms in different molecules, or in the same
 * molecule under a lattice translation. A value of at least 1 means no contact is too short.
 */
export function contactRatio(basis: Mat3, ops: readonly Op[], frac: Float64Array, elements: readonly string[]): number {
  const { n, f, radius, molOf } = expandMolecules(ops, frac, elements);
  let best = Infinity;
  const b = basis;
  // Distance between lattice planes along each axis: a point whose fractional coordinate along axis r differs
  // by e lies at least |e| * spacing[r] away, which rules out most images without computing them.
  const spacing = planeSpacings(b);
  let maxRadius = 0;
  for (let i = 0; i < n; i++) if (radius[i] > maxRadius) maxRadius = radius[i];
  // A fractional offset beyond this cannot give a contact along that axis (with room for rounding).
  const reach0 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[0];
  const reach1 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[1];
  const reach2 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[2];
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      const d0 = f[3 * j] - f[3 * i];
      const d1 = f[3 * j + 1] - f[3 * i + 1];
      const d2 = f[3 * j + 2] - f[3 * i + 2];
      const r0 = Math.round(d0);
      const r1 = Math.round(d1);
      const r2 = Math.round(d2);
      const allowed = CONTACT_FACTOR * (radius[i] + radius[j]);
      const sameMol = molOf[i] === molOf[j];
      for (let u = -r0 - 1; u <= -r0 + 1; u++)
        for (let v = -r1 - 1; v <= -r1 + 1; v++)
          for (let w = -r2 - 1; w <= -r2 + 1; w++) {
            if (sameMol && u === 0 && v === 0 && w === 0) continue;
            const e0 = d0 + u;
            const e1 = d1 + v;
            const e2 = d2 + w;
            const x = e0 * b[0] + e1 * b[3] + e2 * b[6];
            const y = e0 * b[1] + e1 * b[4] + e2 * b[7];
            const z = e0 * b[2] + e1 * b[5] + e2 * b[8];
            const ratio = Math.sqrt(x * x + y * y + z * z) / allowed;
            if (ratio < best) best = ratio;
          }
    }
  }
  return best;
}

/**
 * Whether no contact is too short: the same decision as `contactRatio(...) >= 1`, made faster for the Monte Carlo
 * moves that ask it thousands of times per packing. The 27 lattice images are added in Cartesian form, squared
 * distances are compared with the squared allowed contact, and only a pair within a relative 1e-9 of the limit
 * (where rounding could differ) is settled by `contactRatio`'s own arithmetic. Returns at the first short contact.
 */
export function contactsClear(basis: Mat3, ops: readonly Op[], frac: Float64Array, elements: readonly string[]): boolean {
  const { n, f, radius, molOf } = expandMolecules(ops, frac, elements);
  const b = basis;
  // Cartesian offsets of the 27 images a, b, c in {-1, 0, 1}, in the loop order of contactRatio.
  const image = new Float64Array(81);
  for (let a = -1, t = 0; a <= 1; a++)
    for (let bb = -1; bb <= 1; bb++)
      for (let c = -1; c <= 1; c++, t++) {
        image[3 * t] = a * b[0] + bb * b[3] + c * b[6];
        image[3 * t + 1] = a * b[1] + bb * b[4] + c * b[7];
        image[3 * t + 2] = a * b[2] + bb * b[5] + c * b[8];
      }
  // Distance between lattice planes along each axis: a point whose fractional coordinate along axis r differs
  // by e lies at least |e| * spacing[r] away, which rules out most images without computing them.
  const spacing = planeSpacings(b);
  let maxRadius = 0;
  for (let i = 0; i < n; i++) if (radius[i] > maxRadius) maxRadius = radius[i];
  // A fractional offset beyond this cannot give a contact along that axis (with room for rounding).
  const reach0 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[0];
  const reach1 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[1];
  const reach2 = (CONTACT_FACTOR * 2 * maxRadius * (1 + 1e-6)) / spacing[2];
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      const d0 = f[3 * j] - f[3 * i];
      const d1 = f[3 * j + 1] - f[3 * i + 1];
      const d2 = f[3 * j + 2] - f[3 * i + 2];
      const r0 = Math.round(d0);
      const r1 = Math.round(d1);
      const r2 = Math.round(d2);
      const e0 = d0 - r0;
      const e1 = d1 - r1;
      const e2 = d2 - r2;
      const cx = e0 * b[0] + e1 * b[3] + e2 * b[6];
      const cy = e0 * b[1] + e1 * b[4] + e2 * b[7];
      const cz = e0 * b[2] + e1 * b[5] + e2 * b[8];
      const allowed = CONTACT_FACTOR * (radius[i] + radius[j]);
      const hi = allowed * allowed * (1 + 1e-9);
      const lo = allowed * allowed * (1 - 1e-9);
      // Within one molecule the pair itself (no lattice shift, image a, b, c = r0, r1, r2) is not a contact.
      const self = molOf[i] === molOf[j] && Math.abs(r0) <= 1 && Math.abs(r1) <= 1 && Math.abs(r2) <= 1 ? 9 * (r0 + 1) + 3 * (r1 + 1) + r2 + 1 : -1;
      for (let t = 0; t < 27; t++) {
        if (t === self) continue;
        const a = ((t / 9) | 0) - 1;
        const bb = (((t / 3) | 0) % 3) - 1;
        const c = (t % 3) - 1;
        if (Math.abs(e0 + a) > reach0 || Math.abs(e1 + bb) > reach1 || Math.abs(e2 + c) > reach2) continue;
        const x = cx + image[3 * t];
        const y = cy + image[3 * t + 1];
        const z = cz + image[3 * t + 2];
        const d2sq = x * x + y * y + z * z;
        if (d2sq >= hi) continue;
        if (d2sq < lo) return false;
        // At the limit within rounding: decide by the full computation.
        return contactRatio(basis, ops, frac, elements) >= 1;
      }
    }
  }
  return true;
}

/** Distances between neighbouring lattice planes parallel to (b, c), (c, a) and (a, b): volume / face area. */
function planeSpacings(b: Mat3): [number, number, number] {
  const v = Math.abs(det(b));
  const area = (p: number, q: number) => {
    const x = b[3 * p + 1] * b[3 * q + 2] - b[3 * p + 2] * b[3 * q + 1];
    const y = b[3 * p + 2] * b[3 * q] - b[3 * p] * b[3 * q + 2];
    const z = b[3 * p] * b[3 * q + 1] - b[3 * p + 1] * b[3 * q];
    return Math.sqrt(x * x + y * y + z * z);
  };
  return [v / area(1, 2), v / area(2, 0), v / area(0, 1)];
}

/** Fractional coordinates of the molecule rotated by `orient` with its centroid at `centre` (fractional). */
export function placeMolecule(mol: MoleculeTemplate, orient: Mat3, centre: Vec3, basis: Mat3): Float64Array {
  const inv = inverse(basis);
  const c = vecMat(centre, basis);
  const n = mol.elements.length;
  const out = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    const p: Vec3 = [mol.xyz[3 * i], mol.xyz[3 * i + 1], mol.xyz[3 * i + 2]];
    // Rotate the template, then move it to the centre.
    const q: Vec3 = [
      orient[0] * p[0] + orient[1] * p[1] + orient[2] * p[2] + c[0],
      orient[3] * p[0] + orient[4] * p[1] + orient[5] * p[2] + c[1],
      orient[6] * p[0] + orient[7] * p[1] + orient[8] * p[2] + c[2],
    ];
    const fr = vecMat(q, inv);
    out[3 * i] = fr[0];
    out[3 * i + 1] = fr[1];
    out[3 * i + 2] = fr[2];
  }
  return out;
}

/** A uniformly random rotation (random unit quaternion; common practice). */
export function randomRotation(rng: Rng): Mat3 {
  const u1 = rng.next();
  const u2 = rng.next() * 2 * Math.PI;
  const u3 = rng.next() * 2 * Math.PI;
  const a = Math.sqrt(1 - u1);
  const b = Math.sqrt(u1);
  const [x, y, z, w] = [a * Math.sin(u2), a * Math.cos(u2), b * Math.sin(u3), b * Math.cos(u3)];
  return [
    1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w),
    2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w),
    2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y),
  ];
}

export interface PackingDraw {
  group: GeneratedGroup;
  cell: [number, number, number, number, number, number];
  orient: Mat3;
  centre: Vec3;
  /** Compression stops at this density. */
  targetDensityGPerCm3: number;
}

/**
 * Squeeze a drawn packing by a Monte Carlo compression: alternately shrink one cell length and nudge the
 * molecule (small turn and shift), keeping only moves after which no contact is too short, with steps that
 * shrink as it goes, so the molecules end up touching. Returns null when the start already clashes.
 */
export function squeeze(draw: PackingDraw, mol: MoleculeTemplate, rng: Rng, moves = 400): Packing | null {
  const ops = groupOps(draw.group);
  // Stop compressing at a density drawn from the usual range of organic crystals, 1.1–1.6 g/cm3 (common practice).
  const maxVolume = (ops.length * mol.massGPerMol) / (AVOGADRO * 1e-24 * draw.targetDensityGPerCm3);
  let cell = draw.cell.slice() as Packing['cell'];
  let orient = draw.orient;
  let centre = draw.centre.slice() as Vec3;
  const ok = (c: Packing['cell'], o: Mat3, ctr: Vec3) => {
    const basis = basisFromCell(...c);
    return contactsClear(basis, ops, placeMolecule(mol, o, ctr, basis), mol.elements);
  };
  if (!ok(cell, orient, centre)) return null;
  const monoclinic = GROUPS[draw.group].system === 'monoclinic';
  for (let m = 0; m < moves; m++) {
    // Step size decays geometrically from 6% to 0.2%.
    const step = 0.06 * Math.pow(0.002 / 0.06, m / (moves - 1));
    const kind = rng.next();
    if (kind < 0.5) {
      const trial = cell.slice() as Packing['cell'];
      trial[rng.int(3)] *= 1 - step;
      if (det(basisFromCell(...trial)) >= maxVolume && ok(trial, orient, centre)) cell = trial;
    } else if (kind < 0.9 || !monoclinic) {
      const turn = rotation([rng.normal(1), rng.normal(1), rng.normal(1)], rng.normal(step * 3));
      const o = matMul3(turn, orient);
      const ctr: Vec3 = [centre[0] + rng.normal(step / 2), centre[1] + rng.normal(step / 2), centre[2] + rng.normal(step / 2)];
      if (ok(cell, o, ctr)) {
        orient = o;
        centre = ctr;
      }
    } else {
      const trial = cell.slice() as Packing['cell'];
      trial[4] = Math.min(120, Math.max(91, trial[4] + rng.normal(step * 20)));
      if (ok(trial, orient, centre)) cell = trial;
    }
  }
  const basis = basisFromCell(...cell);
  const packing: Packing = { group: draw.group, cell, frac: placeMolecule(mol, orient, centre, basis), densityGPerCm3: 0 };
  packing.densityGPerCm3 = packingDensity(packing, mol);
  return packing;
}

function matMul3(a: Mat3, b: Mat3): Mat3 {
  const out = new Array<number>(9).fill(0);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) out[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
  return out;
}

/** Draw a random start: cell shape for the group's crystal system, 3x the estimated volume, random orientation and centre. */
export function drawPacking(group: GeneratedGroup, mol: MoleculeTemplate, rng: Rng): PackingDraw {
  const z = GROUPS[group].xyz.length;
  // About 18 Å^3 per non-hydrogen atom (common practice, from memory), started four times looser.
  const heavy = mol.elements.filter((e) => e !== 'H').length;
  const volume = 4 * 18 * heavy * z;
  const system = GROUPS[group].system;
  let alpha = 90;
  let beta = 90;
  let gamma = 90;
  if (system === 'monoclinic') beta = rng.uniform(93, 118);
  if (system === 'triclinic') {
    alpha = rng.uniform(75, 105);
    beta = rng.uniform(75, 105);
    gamma = rng.uniform(75, 105);
  }
  const ratios = [rng.uniform(0.6, 1.6), rng.uniform(0.6, 1.6), rng.uniform(0.6, 1.6)];
  const unit = basisFromCell(ratios[0], ratios[1], ratios[2], alpha, beta, gamma);
  const scale = Math.cbrt(volume / det(unit));
  const cell: Packing['cell'] = [ratios[0] * scale, ratios[1] * scale, ratios[2] * scale, alpha, beta, gamma];
  return {
    group,
    cell,
    orient: randomRotation(rng),
    centre: [rng.next(), rng.next(), rng.next()],
    targetDensityGPerCm3: rng.uniform(1.3, 1.55),
  };
}

/**
 * A distinct packing close to `base`: the molecule turned by `angleDeg` about a random axis and two cell
 * lengths changed by +/- `stretch` (volume nearly unchanged), accepted only if no contact is too short.
 */
export function closePartner(base: Packing, mol: MoleculeTemplate, rng: Rng, angleDeg: number, stretch: number): Packing | null {
  const ops = groupOps(base.group);
  const basis0 = basisFromCell(...base.cell);
  // Recover the molecule's centre (fractional) and its Cartesian atoms relative to that centre (as a template).
  const n = mol.elements.length;
  const cart: Vec3[] = [];
  const centre: Vec3 = [0, 0, 0];
  for (let i = 0; i < n; i++) {
    const p = vecMat([base.frac[3 * i], base.frac[3 * i + 1], base.frac[3 * i + 2]], basis0);
    cart.push(p);
    for (let r = 0; r < 3; r++) centre[r] += p[r] / n;
  }
  const centreFrac = vecMat(centre, inverse(basis0));
  const relative: MoleculeTemplate = { ...mol, xyz: new Float64Array(3 * n) };
  for (let a = 0; a < n; a++) for (let r = 0; r < 3; r++) relative.xyz[3 * a + r] = cart[a][r] - centre[r];
  for (let attempt = 0; attempt < 40; attempt++) {
    const axis: Vec3 = [rng.normal(1), rng.normal(1), rng.normal(1)];
    const turn = rotation(axis, (angleDeg * Math.PI) / 180);
    const cell = base.cell.slice() as Packing['cell'];
    const [i, j] = rng.shuffle([0, 1, 2]).slice(0, 2);
    cell[i] *= 1 + stretch;
    cell[j] /= 1 + stretch;
    const basis = basisFromCell(...cell);
    const frac = placeMolecule(relative, turn, centreFrac, basis);
    if (!contactsClear(basis, ops, frac, mol.elements)) continue;
    const p: Packing = { group: base.group, cell, frac, densityGPerCm3: 0 };
    p.densityGPerCm3 = packingDensity(p, mol);
    return p;
  }
  return null;
}

/** Every molecule of the cell: fractional coordinates of each atom under each operation, its radius and molecule. */
function expandMolecules(ops: readonly Op[], frac: Float64Array, elements: readonly string[]) {
  const nMol = elements.length;
  const n = ops.length * nMol;
  const f = new Float64Array(3 * n);
  const radius = new Float64Array(n);
  const molOf = new Int32Array(n);
  for (let g = 0; g < ops.length; g++) {
    const { rot, trans } = ops[g];
    for (let i = 0; i < nMol; i++) {
      const x = frac[3 * i];
      const y = frac[3 * i + 1];
      const zf = frac[3 * i + 2];
      const o = g * nMol + i;
      for (let r = 0; r < 3; r++) f[3 * o + r] = rot[3 * r] * x + rot[3 * r + 1] * y + rot[3 * r + 2] * zf + trans[r];
      radius[o] = VDW_RADIUS[elements[i]];
      molOf[o] = g;
    }
  }
  return { n, f, radius, molOf };
}
