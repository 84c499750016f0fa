// The labelled landscape generator: K distinct packings of the invented molecule, each written several times
// the way a search finds the same minimum again (other cell, setting, origin, supercell, P1, atom order, noise),
// plus distinct "close partner" packings within 0.1 kJ/mol and 0.005 g/cm3 of another one. Returns a
// multi-block CIF, an energies CSV and the truth (which packing each block is). Deterministic from the seed.
import { makeRng, type Rng } from './prng.js';
import { orvazinone, type MoleculeTemplate } from './molecule.js';
import { GROUPS, IT_NUMBER, type GeneratedGroup } from './space-groups.js';
import { closePartner, drawPacking, groupOps, packingDensity, squeeze, type Packing } from './packing.js';
import {
  basisOf,
  changeBasis,
  doubleCell,
  expandToP1,
  jitterAtoms,
  randomUnimodular,
  shiftOrigin,
  shuffleAtoms,
  wrapMolecules,
  type Expressed,
} from './rewrite.js';
import { writeCifBlock } from './cif-block.js';
import type { Mat3, Vec3 } from './mat3.js';

export const ALL_GROUPS: GeneratedGroup[] = ['P21/c', 'P-1', 'P212121', 'C2/c', 'P21', 'Pbca'];


/** Ways a copy is written. */
export type CopyKind = 'standard' | 'symbol-only' | 'other-cell' | 'other-setting' | 'p1' | 'p1-supercell';

export interface GeneratorOptions {
  seed: number;
  /** Distinct packings K (close partners included). */
  packings: number;
  /** Copies written per packing. */
  copiesPerPacking: number;
  /** How many of the K packings are close partners of another one. */
  closePairs: number;
  spaceGroups?: GeneratedGroup[];
  /** Allow supercell copies (they change the atom count per cell). Default true. */
  supercells?: boolean;
  /** Cartesian noise per coordinate, Å. Default 0.002. */
  noiseAngstrom?: number;
  /** Relative noise on cell lengths and absolute noise on free angles (degrees). Defaults 2e-4 and 0.01. */
  cellNoiseRelative?: number;
  angleNoiseDeg?: number;
  /** Energy noise per copy, kJ/mol. Default 0.02. */
  energyNoiseKjPerMol?: number;
  /** Turn (degrees) and cell stretch of close partners. Defaults 4 and 0.01. */
  closeTurnDeg?: number;
  closeStretch?: number;
  /** Write the energy also as this CIF data item (name without underscore), or null. */
  energyItem?: string | null;
  /** Block id prefix. Default "cand". */
  idPrefix?: string;
  /** Monte Carlo moves per packing. Default 400. */
  squeezeMoves?: number;
  /**
   * Flat minima: this many base packings get two more packings each, the molecule turned by `flatTurnDeg`
   * (default 1) about a random axis in the same cell, with exactly the base packing's energy, as an optimiser
   * leaves one minimum on a flat energy surface at several nearby points. Default 0.
   */
  flatTriples?: number;
  flatTurnDeg?: number;
  /** This many copies (in different packings with at least 3 copies) get an energy 2-5 kJ/mol off, either sign. Default 0. */
  energyFaults?: number;
}

export interface GeneratedPacking {
  group: GeneratedGroup;
  densityGPerCm3: number;
  energyKjPerMol: number;
  /** Index of the packing this one is a close partner of, or -1. */
  partnerOf: number;
  packing: Packing;
}

export interface GeneratedLandscape {
  moleculeName: string;
  cif: string;
  /** CSV with columns id, energy (kJ/mol). */
  energiesCsv: string;
  ids: string[];
  /** Packing index per block (the truth grouping). */
  truth: Int32Array;
  energiesKjPerMol: number[];
  densitiesGPerCm3: number[];
  atomsPerCell: number[];
  kinds: CopyKind[];
  packings: GeneratedPacking[];
  /** Pairs of packing indices that are distinct but within 0.1 kJ/mol and 0.005 g/cm3. */
  closePairs: Array<[number, number]>;
  /** Packing indices of each planted flat minimum (base packing first). */
  flatGroups: Array<[number, number, number]>;
  /** Block indices of the copies given an energy fault, and the fault added (kJ/mol). */
  energyFaults: Array<[number, number]>;
}

export function generateLandscape(options: GeneratorOptions): GeneratedLandscape {
  const rng = makeRng(options.seed);
  const mol = orvazinone();
  const groups = options.spaceGroups ?? ALL_GROUPS;
  const packings: GeneratedPacking[] = [];
  const closePairs: Array<[number, number]> = [];
  const nBase = options.packings - options.closePairs;
  if (nBase < 1 || options.closePairs > nBase) throw new Error('need at least as many base packings as close partners');
  for (let i = 0; i < nBase; i++) {
    const group = groups[i % groups.length];
    const packing = squeezeUntilUsable(group, mol, rng, options.squeezeMoves ?? 400);
    // An invented energy model: denser packings tend to be lower, with a spread of a few kJ/mol.
    const energy = -70 - 40 * (packing.densityGPerCm3 - 1.4) + rng.uniform(-4, 4);
    packings.push({ group, densityGPerCm3: packing.densityGPerCm3, energyKjPerMol: energy, partnerOf: -1, packing });
  }
  // Close partners: a base packing too tightly packed to turn its molecule is passed over for the next one.
  let nextBase = 0;
  for (let c = 0; c < options.closePairs; c++) {
    let partner: Packing | null = null;
    let baseIndex = -1;
    while (!partner && nextBase < nBase) {
      baseIndex = nextBase++;
      for (let attempt = 0; attempt < 5 && !partner; attempt++)
        partner = closePartner(packings[baseIndex].packing, mol, rng, options.closeTurnDeg ?? 4, options.closeStretch ?? 0.01);
    }
    if (!partner) throw new Error(`could make only ${c} close partners from ${nBase} base packings`);
    const base = packings[baseIndex];
    const sign = rng.next() < 0.5 ? -1 : 1;
    packings.push({
      group: base.group,
      densityGPerCm3: partner.densityGPerCm3,
      energyKjPerMol: base.energyKjPerMol + sign * rng.uniform(0.02, 0.08),
      partnerOf: baseIndex,
      packing: partner,
    });
    closePairs.push([baseIndex, packings.length - 1]);
  }
  // Flat minima: two turned copies of a base packing in its own cell, at the base packing's energy.
  const flatGroups: Array<[number, number, number]> = [];
  for (let f = 0; f < (options.flatTriples ?? 0); f++) {
    const baseIndex = nextBase++;
    if (baseIndex >= nBase) throw new Error(`too few base packings for ${options.flatTriples} flat minima beside ${options.closePairs} close partners`);
    const base = packings[baseIndex];
    const members: number[] = [baseIndex];
    for (let t = 0; t < 2; t++) {
      let turned: Packing | null = null;
      for (let attempt = 0; attempt < 5 && !turned; attempt++) turned = closePartner(base.packing, mol, rng, options.flatTurnDeg ?? 1, 0);
      if (!turned) throw new Error(`packing ${baseIndex} is too tightly packed to turn its molecule for a flat minimum`);
      packings.push({ group: base.group, densityGPerCm3: turned.densityGPerCm3, energyKjPerMol: base.energyKjPerMol, partnerOf: baseIndex, packing: turned });
      members.push(packings.length - 1);
    }
    flatGroups.push(members as [number, number, number]);
  }

  // Every copy of every packing, then shuffled so copies are not adjacent in the input.
  interface Copy {
    packing: number;
    copy: number;
  }
  const copies: Copy[] = [];
  for (let p = 0; p < packings.length; p++) for (let c = 0; c < options.copiesPerPacking; c++) copies.push({ packing: p, copy: c });
  rng.shuffle(copies);

  const prefix = options.idPrefix ?? 'cand';
  const width = String(copies.length).length;
  const blocks: string[] = [];
  const csv: string[] = ['id,energy'];
  const out: GeneratedLandscape = {
    moleculeName: 'orvazinone',
    cif: '',
    energiesCsv: '',
    ids: [],
    truth: new Int32Array(copies.length),
    energiesKjPerMol: [],
    densitiesGPerCm3: [],
    atomsPerCell: [],
    kinds: [],
    packings,
    closePairs,
    flatGroups,
    energyFaults: [],
  };
  const kinds: CopyKind[] = ['standard', 'other-cell', 'p1', 'symbol-only', 'p1-supercell', 'other-setting'];
  copies.forEach((cp, n) => {
    const gp = packings[cp.packing];
    let kind = kinds[cp.copy % kinds.length];
    if (kind === 'p1-supercell' && options.supercells === false) kind = 'p1';
    const id = `${prefix}-${String(n + 1).padStart(width, '0')}`;
    const energy = gp.energyKjPerMol + rng.normal(options.energyNoiseKjPerMol ?? 0.02);
    const { expressed, symbol, itNumber, listOps } = writeCopy(gp, mol, kind, rng, options);
    const items: Array<[string, string]> = options.energyItem ? [[options.energyItem, energy.toFixed(4)]] : [];
    blocks.push(writeCifBlock(expressed, { id, symbol, itNumber, listOps, items }));
    csv.push(`${id},${energy.toFixed(4)}`);
    out.ids.push(id);
    out.truth[n] = cp.packing;
    out.energiesKjPerMol.push(energy);
    out.densitiesGPerCm3.push(gp.densityGPerCm3);
    out.atomsPerCell.push(expressed.frac.length / 3);
    out.kinds.push(kind);
  });
  plantEnergyFaults(out, blocks, csv, options);
  out.cif = `# Invented landscape of ${mol.elements.length}-atom ${out.moleculeName} (generated, seed ${options.seed})\n${blocks.join('\n')}`;
  out.energiesCsv = `${csv.join('\n')}\n`;
  return out;
}

/**
 * Give `energyFaults` copies an energy 2-5 kJ/mol off (either sign), at most one per packing and only in
 * packings with at least 3 copies, so the group's median stays the true energy. Uses its own seeded stream,
 * so the rest of the landscape is the same as without faults.
 */
function plantEnergyFaults(out: GeneratedLandscape, blocks: string[], csv: string[], options: GeneratorOptions): void {
  const faults = options.energyFaults ?? 0;
  if (faults === 0) return;
  if (options.copiesPerPacking < 3) throw new Error('energy faults need at least 3 copies per packing');
  if (faults > out.packings.length) throw new Error(`${faults} energy faults need as many packings, not ${out.packings.length}`);
  const rng = makeRng(options.seed + 7919);
  const packingsHit = rng.shuffle(out.packings.map((_, p) => p)).slice(0, faults);
  for (const p of packingsHit) {
    const copies = out.ids.map((_, i) => i).filter((i) => out.truth[i] === p);
    const i = copies[rng.int(copies.length)];
    const fault = (rng.next() < 0.5 ? -1 : 1) * rng.uniform(2, 5);
    out.energiesKjPerMol[i] += fault;
    out.energyFaults.push([i, fault]);
    const energy = out.energiesKjPerMol[i].toFixed(4);
    csv[i + 1] = `${out.ids[i]},${energy}`;
    if (options.energyItem) blocks[i] = blocks[i].replace(new RegExp(`^_${options.energyItem} .*$`, 'm'), `_${options.energyItem} ${energy}`);
  }
  out.energyFaults.sort((a, b) => a[0] - b[0]);
}

function squeezeUntilUsable(group: GeneratedGroup, mol: MoleculeTemplate, rng: Rng, moves: number): Packing {
  for (let attempt = 0; attempt < 200; attempt++) {
    const p = squeeze(drawPacking(group, mol, rng), mol, rng, moves);
    // Keep packings in the usual density range of organic crystals, 1.1–1.6 g/cm3 (common practice).
    if (p && p.densityGPerCm3 >= 1.1 && p.densityGPerCm3 <= 1.6) return p;
  }
  throw new Error(`no usable ${group} packing after 200 attempts`);
}

/** The standard-setting description with cell and atom noise applied. */
function noisyStandard(gp: GeneratedPacking, mol: MoleculeTemplate, rng: Rng, o: GeneratorOptions): Expressed {
  const rel = o.cellNoiseRelative ?? 2e-4;
  const ang = o.angleNoiseDeg ?? 0.01;
  const cell = gp.packing.cell.slice();
  for (let r = 0; r < 3; r++) cell[r] *= 1 + rng.normal(rel);
  // Only angles the crystal system leaves free get noise, so the operations stay exact.
  const system = GROUPS[gp.group].system;
  if (system === 'monoclinic') cell[4] += rng.normal(ang);
  if (system === 'triclinic') for (let r = 3; r < 6; r++) cell[r] += rng.normal(ang);
  // Fractional coordinates are kept, so the molecule follows the (slightly changed) cell, as after a relaxation.
  return {
    basis: basisOf(cell),
    ops: groupOps(gp.group),
    frac: Float64Array.from(gp.packing.frac),
    elements: mol.elements.slice(),
    atomsPerMolecule: mol.elements.length,
  };
}

/** Origin shifts by half lattice vectors keep the operations of all generated groups unchanged. */
function halfShift(rng: Rng): Vec3 {
  return [rng.int(2) / 2, rng.int(2) / 2, rng.int(2) / 2];
}

function twelfthShift(rng: Rng): Vec3 {
  return [rng.int(12) / 12, rng.int(12) / 12, rng.int(12) / 12];
}

/** The named alternative settings of P21/c: P21/n (c' = a + c) and P21/a (a' = c, c' = -a). */
const P21C_SETTINGS: Array<{ p: Mat3; symbol: string }> = [
  { p: [1, 0, 0, 0, 1, 0, 1, 0, 1], symbol: 'P 1 21/n 1' },
  { p: [0, 0, 1, 0, 1, 0, -1, 0, 0], symbol: 'P 1 21/a 1' },
];

function writeCopy(
  gp: GeneratedPacking,
  mol: MoleculeTemplate,
  kind: CopyKind,
  rng: Rng,
  o: GeneratorOptions,
): { expressed: Expressed; symbol: string | null; itNumber: number | null; listOps: boolean } {
  const sigma = o.noiseAngstrom ?? 0.002;
  let e = noisyStandard(gp, mol, rng, o);
  const symbol = GROUPS[gp.group].symbol;
  const it = IT_NUMBER[gp.group];
  switch (kind) {
    case 'standard':
    case 'symbol-only': {
      e = shuffleAtoms(jitterAtoms(e, rng, sigma), rng);
      e = wrapMolecules(shiftOrigin(e, halfShift(rng)));
      return { expressed: e, symbol, itNumber: kind === 'standard' ? it : null, listOps: kind === 'standard' };
    }
    case 'other-cell': {
      e = shuffleAtoms(jitterAtoms(e, rng, sigma), rng);
      e = changeBasis(e, randomUnimodular(rng, e.basis));
      e = wrapMolecules(shiftOrigin(e, twelfthShift(rng)));
      return { expressed: e, symbol: null, itNumber: it, listOps: true };
    }
    case 'other-setting': {
      e = shuffleAtoms(jitterAtoms(e, rng, sigma), rng);
      if (gp.group === 'P21/c') {
        const s = P21C_SETTINGS[rng.int(P21C_SETTINGS.length)];
        e = wrapMolecules(shiftOrigin(changeBasis(e, s.p), halfShift(rng)));
        return { expressed: e, symbol: s.symbol, itNumber: it, listOps: true };
      }
      e = changeBasis(e, randomUnimodular(rng, e.basis));
      e = wrapMolecules(shiftOrigin(e, twelfthShift(rng)));
      return { expressed: e, symbol: null, itNumber: it, listOps: true };
    }
    case 'p1':
    case 'p1-supercell': {
      // An optimiser run in P1 moves every atom independently.
      e = shuffleAtoms(jitterAtoms(expandToP1(e), rng, sigma), rng);
      e = changeBasis(e, randomUnimodular(rng, e.basis));
      if (kind === 'p1-supercell') e = doubleCell(e, rng.int(3));
      e = wrapMolecules(shiftOrigin(e, [rng.next(), rng.next(), rng.next()]));
      // Half of the P1 copies list the identity operation, half list nothing.
      const listOps = rng.next() < 0.5;
      if (listOps) e = { ...e, ops: [{ rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] }] };
      return { expressed: e, symbol: 'P 1', itNumber: listOps ? 1 : null, listOps };
    }
  }
}

/** Density of a generated packing (exposed for tests). */
export function generatedDensity(p: Packing): number {
  return packingDensity(p, orvazinone());
}
