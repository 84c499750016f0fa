// Facts about a crystal that need no invariants: volume, atoms per cell, density, molecules, Z, Z', and the
// space group the crystal has (./crystal-symmetry.ts).
// Always computed on the full structure with hydrogens, so they do not depend on the hydrogen option.
//
// Density = sum over atoms in the cell of occupancy * standard atomic weight / (N_A * V)
// (IUPAC 2021 abridged weights, see ./elements.ts; N_A = 6.02214076e23 /mol exactly, SI 2019).
import type { CrystalFacts, CrystalRecord } from '../types.js';
import { cellVolume } from './cell.js';
import { selectOrderedSites } from './disorder.js';
import { atomicNumber, atomicWeight } from './elements.js';
import { findMolecules, hillFormula, OVERLAP_ANGSTROM } from './molecules.js';
import { expandSites } from './periodic-set.js';
import { crystalSymmetry, type SymmetryDoubts } from './crystal-symmetry.js';
import { DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM, type SymmetryDetection } from './detect-symmetry.js';

const AVOGADRO_PER_MOL = 6.02214076e23;
const CUBIC_ANGSTROM_IN_CM3 = 1e-24;
/** Declared and computed values that differ by more than this fraction get a note. */
const AGREEMENT_FRACTION = 0.005;
/** Element ratios of the cell content and the stated formula may differ by this fraction (rounded occupancies). */
const COMPOSITION_FRACTION = 0.03;

export interface FactsOptions {
  /** Tolerance (Å) of symmetry detection (./detect-symmetry.ts); default DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM. */
  symmetryToleranceAngstrom?: number;
}

export function crystalFacts(record: CrystalRecord, opts: FactsOptions = {}): CrystalFacts {
  return crystalFactsAndSymmetry(record, opts).facts;
}

/** The facts and the full symmetry detection behind `facts.symmetry` (null when detection did not run). */
export function crystalFactsAndSymmetry(record: CrystalRecord, opts: FactsOptions = {}): { facts: CrystalFacts; detection: SymmetryDetection | null } {
  const volumeA3 = cellVolume(record.cell);
  const notes: string[] = [];
  if (record.sites.length === 0) {
    throw new Error(`${record.source}: the block lists no atom sites, so there is no density or Z to compute`);
  }

  // Mass: every listed site, weighted by its occupancy (disorder alternatives add up to one atom).
  const all = expandSites(record, record.sites.map((_, i) => i), { sharedPositions: 'keep-all' });
  let massPerCell = 0;
  for (let p = 0; p < all.count; p++) {
    const w = all.occupancy[p]! * atomicWeight(all.atomicNumbers[p]!);
    massPerCell += w;
  }
  const densityGPerCm3 = massPerCell / (AVOGADRO_PER_MOL * volumeA3 * CUBIC_ANGSTROM_IN_CM3);

  // Hydrogens counted on their atoms (_atom_site_attached_hydrogens) but given no sites: a second density that
  // counts them, so a stated density that includes them is explained. The periodic set never holds them.
  const hasHydrogenSites = record.sites.some((s) => s.element === 'H');
  let implicitHydrogens: CrystalFacts['implicitHydrogens'];
  if (!hasHydrogenSites && record.sites.some((s) => (s.attachedHydrogens ?? 0) > 0)) {
    let perCell = 0;
    for (let p = 0; p < all.count; p++) perCell += all.occupancy[p]! * (record.sites[all.siteIndex[p]!]!.attachedHydrogens ?? 0);
    const withH = (massPerCell + perCell * atomicWeight(1)) / (AVOGADRO_PER_MOL * volumeA3 * CUBIC_ANGSTROM_IN_CM3);
    implicitHydrogens = { perCell, densityGPerCm3: withH };
  }

  // Atoms and molecules: the one ordered structure the disorder policy picks, hydrogens included.
  const selection = selectOrderedSites(record.sites);
  notes.push(...selection.notes);
  // With every site fully occupied the two expansions are the same (nothing to choose between).
  const fullyOrdered = record.sites.every((s) => s.occupancy >= 1 - 1e-6) && selection.kept.length === record.sites.length;
  const ordered = fullyOrdered ? all : expandSites(record, selection.kept);
  notes.push(...ordered.notes);
  const molecules = findMolecules(ordered);
  notes.push(...molecules.notes);
  if (molecules.shortestOverlap !== null) {
    const o = molecules.shortestOverlap;
    const a = record.sites[ordered.siteIndex[o.i]!]!.label;
    const b = record.sites[ordered.siteIndex[o.j]!]!.label;
    notes.push(
      `${molecules.overlaps} pair(s) of atoms closer than ${OVERLAP_ANGSTROM} Å (shortest ${o.distanceAngstrom.toFixed(3)} Å, ${a} and ${a === b ? 'an image of itself' : b}): ` +
        'overlapping copies, as when disorder across a symmetry element is given full occupancies; atoms, density and Z count every copy',
    );
  }
  const opsKnown = record.opsOrigin !== 'identity';
  const nOps = Math.max(1, record.ops.length);
  const zPrime = opsKnown ? molecules.z / nOps : null;

  notes.push(...consistencyNotes(record, volumeA3, densityGPerCm3, massPerCell, molecules.z, all.duplicateSites, implicitHydrogens ?? null));
  notes.push(...compositionNotes(record, all));

  // The crystal's own symmetry, on the ordered atoms with hydrogens.
  const formula = textItem(record.text, '_chemical_formula_sum');
  const composition = formula === null ? null : parseFormulaSum(formula);
  const doubts: SymmetryDoubts = {
    disordered: selection.notes.length > 0 || record.sites.some((site) => site.occupancy < 1 - 1e-6),
    missingHydrogens: !hasHydrogenSites && (implicitHydrogens !== undefined || (composition !== null && (composition.get(1) ?? 0) > 0)),
    overlaps: molecules.overlaps,
  };
  const { symmetry, detection } = crystalSymmetry(
    record, { basis: ordered.basis, frac: ordered.frac, types: ordered.atomicNumbers }, molecules.z, doubts,
    opts.symmetryToleranceAngstrom ?? DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM,
  );
  return {
    facts: {
      volumeA3,
      atomsPerCell: ordered.count,
      densityGPerCm3,
      z: molecules.z,
      zPrime,
      formulas: molecules.formulas,
      symmetry,
      ...(implicitHydrogens === undefined ? {} : { implicitHydrogens }),
      notes,
    },
    detection,
  };
}

/**
 * Compare with what the file itself states (`_exptl_crystal_density_diffrn`,
 * `_chemical_formula_sum`, `_cell_formula_units_Z`) and say why they disagree when we can tell.
 */
function consistencyNotes(
  record: CrystalRecord, volumeA3: number, densityGPerCm3: number, massPerCell: number, z: number,
  duplicateSites: number, implicitHydrogens: { perCell: number; densityGPerCm3: number } | null,
): string[] {
  const notes: string[] = [];
  const text = record.text;
  // (A stated `_cell_volume` that disagrees with the cell is noted by the reader, src/io/crystal-record.ts.)
  const formula = textItem(text, '_chemical_formula_sum');
  const composition = formula === null ? null : parseFormulaSum(formula);
  const hasHydrogenSites = record.sites.some((s) => s.element === 'H');
  if (composition !== null && (composition.get(1) ?? 0) > 0 && !hasHydrogenSites) {
    notes.push(`_chemical_formula_sum (${formula}) has hydrogen but no hydrogen sites are listed: the density leaves out their mass`);
  }
  const declaredDensity = numberItem(text, '_exptl_crystal_density_diffrn');
  const zFormulaUnits = numberItem(text, '_cell_formula_units_z');
  if (declaredDensity === null && composition !== null && zFormulaUnits !== null && zFormulaUnits > 0) {
    // No stated density: the formula and Z of the file still give one to check the sites against.
    let formulaMass = 0;
    for (const [zc, n] of composition) formulaMass += n * atomicWeight(zc);
    const fromFormula = (formulaMass * zFormulaUnits) / (AVOGADRO_PER_MOL * volumeA3 * CUBIC_ANGSTROM_IN_CM3);
    if (Math.abs(fromFormula - densityGPerCm3) > AGREEMENT_FRACTION * fromFormula) {
      notes.push(
        `the sites give ${densityGPerCm3.toFixed(3)} g/cm³ but _chemical_formula_sum x _cell_formula_units_Z (${formula} x ${zFormulaUnits}) gives ${fromFormula.toFixed(3)} g/cm³`,
      );
    }
  }
  if (declaredDensity !== null && Math.abs(declaredDensity - densityGPerCm3) > AGREEMENT_FRACTION * declaredDensity) {
    const implicit = implicitHydrogens !== null && Math.abs(implicitHydrogens.densityGPerCm3 - declaredDensity) <= AGREEMENT_FRACTION * declaredDensity;
    notes.push(
      `_exptl_crystal_density_diffrn says ${declaredDensity} g/cm³, computed ${densityGPerCm3.toFixed(3)} g/cm³: ` +
        (implicit
          ? `the stated value counts the ${round3(implicitHydrogens.perCell)} hydrogens per cell that _atom_site_attached_hydrogens puts on listed atoms ` +
            `without sites of their own; with them the density is ${implicitHydrogens.densityGPerCm3.toFixed(3)} g/cm³ (the comparison uses the listed sites only)`
          : densityReason(declaredDensity, volumeA3, massPerCell, composition, formula, zFormulaUnits, hasHydrogenSites, duplicateSites)),
    );
  }
  if (zFormulaUnits !== null && Number.isInteger(zFormulaUnits) && zFormulaUnits !== z && zFormulaUnits > 0) {
    const perUnit = z / zFormulaUnits;
    notes.push(
      `_cell_formula_units_Z says ${zFormulaUnits}, the bond graph gives ${z} molecules per cell` +
        (Number.isInteger(perUnit) && perUnit > 1 ? ` (${perUnit} molecules per formula unit, as in a co-crystal, salt or solvate)` : ''),
    );
  }
  return notes;
}

/**
 * When the cell's content is not a whole multiple of `_chemical_formula_sum` (hydrogen left out when no hydrogen
 * sites are listed), say so: atoms are missing or extra, or the coordinates belong to another origin or setting
 * than the operations used (as when a symbol alone is given for coordinates in a non-standard origin).
 */
function compositionNotes(record: CrystalRecord, all: ReturnType<typeof expandSites>): string[] {
  const formula = textItem(record.text, '_chemical_formula_sum');
  const composition = formula === null ? null : parseFormulaSum(formula);
  if (composition === null) return [];
  const hasHydrogenSites = record.sites.some((s) => s.element === 'H');
  const content = new Map<number, number>();
  for (let p = 0; p < all.count; p++) {
    const zc = all.atomicNumbers[p]!;
    content.set(zc, (content.get(zc) ?? 0) + all.occupancy[p]!);
  }
  const elements = new Set([...composition.keys(), ...content.keys()]);
  if (!hasHydrogenSites) elements.delete(1);
  const ratios: number[] = [];
  for (const zc of elements) ratios.push((content.get(zc) ?? 0) / (composition.get(zc) ?? 0));
  const lo = Math.min(...ratios);
  const hi = Math.max(...ratios);
  // Occupancies rounded in the file move a ratio by a few per cent at most.
  if (ratios.length === 0 || (Number.isFinite(hi) && lo > 0 && hi <= lo * (1 + COMPOSITION_FRACTION))) return [];
  const shown = new Map([...content.entries()].filter(([zc]) => hasHydrogenSites || zc !== 1).map(([zc, n]) => [zc, round3(n)]));
  const cellFormula = hillFormula(shown);
  return [
    `the sites put ${cellFormula} in the cell, which is not a whole multiple of _chemical_formula_sum (${formula})` +
      (hasHydrogenSites ? '' : ', hydrogen aside') +
      `: atoms are missing or extra, or the coordinates are for another origin or setting than the ${record.ops.length} operations used`,
  ];
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}

/** Why a stated density differs from the sites' one, as far as the file lets us tell. */
function densityReason(
  declared: number, volumeA3: number, massPerCell: number, composition: Map<number, number> | null, formula: string | null,
  zDeclared: number | null, hasHydrogenSites: boolean, duplicateSites: number,
): string {
  const parts: string[] = [];
  const hydrogenInFormula = composition !== null && (composition.get(1) ?? 0) > 0;
  if (composition !== null) {
    let formulaMass = 0;
    for (const [zc, n] of composition) formulaMass += n * atomicWeight(zc);
    // Without a stated Z, take the whole number of formula units nearest to what the sites hold.
    // (Hydrogens missing from the sites are left out of that count.)
    const hydrogenMassInFormula = (composition.get(1) ?? 0) * atomicWeight(1);
    const countedMass = !hasHydrogenSites ? formulaMass - hydrogenMassInFormula : formulaMass;
    const z = zDeclared ?? Math.max(1, Math.round(massPerCell / countedMass));
    const zWord = zDeclared === null ? `Z = ${z} (nearest whole number of formula units; the file states none)` : `Z = ${z}`;
    const fromFormula = (formulaMass * z) / (AVOGADRO_PER_MOL * volumeA3 * CUBIC_ANGSTROM_IN_CM3);
    if (Math.abs(fromFormula - declared) <= AGREEMENT_FRACTION * declared) {
      parts.push(
        `the stated value follows from ${formula} with ${zWord}, but the listed sites hold ${(massPerCell / formulaMass).toFixed(3)} formula units per cell`,
      );
      parts.push(!hasHydrogenSites && hydrogenInFormula ? 'hydrogens are missing from the sites' : 'occupancies or missing atoms do not add up to the formula');
    } else {
      parts.push(`${formula} with ${zWord} gives ${fromFormula.toFixed(3)} g/cm³, so the stated value does not follow from the file either`);
    }
  } else if (!hasHydrogenSites) {
    parts.push('no hydrogen sites are listed');
  } else {
    parts.push('the file gives no formula to trace it to (occupancies or missing atoms are the usual causes)');
  }
  if (duplicateSites > 0) parts.push(`${duplicateSites} listed site(s) are symmetry copies of others and count once here`);
  return parts.join('; ');
}

/** A single-valued data item's raw text in a block (same line or next line), or null. */
export function textItem(blockText: string, name: string): string | null {
  const re = new RegExp(`^[ \\t]*${name.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?=\\s)[ \\t]*(\\r?\\n)?[ \\t]*('([^'\\n]*)'|"([^"\\n]*)"|([^\\s'";][^\\s]*))`, 'im');
  const m = re.exec(blockText);
  if (m === null) return null;
  const value = m[3] ?? m[4] ?? m[5] ?? '';
  if (value.startsWith('_') || value === '?' || value === '.' || value === '') return null;
  return value;
}

/** A single-valued numeric item with its standard uncertainty stripped (`1.234(5)`), or null. */
export function numberItem(blockText: string, name: string): number | null {
  const t = textItem(blockText, name);
  if (t === null) return null;
  const v = Number(t.replace(/\(\d+\)$/, ''));
  return Number.isFinite(v) ? v : null;
}

/** `C12 H10 N2 O` -> atomic number -> count; null when a part is not element + count. */
export function parseFormulaSum(formula: string): Map<number, number> | null {
  const out = new Map<number, number>();
  const re = /([A-Z][a-z]?)(\d*\.?\d*)/g;
  // A formula written in one pair of brackets, '(O H2)', means the same as without them.
  const compact = formula.replace(/\s+/g, '').replace(/^\((.*)\)$/, '$1');
  let consumed = 0;
  for (const m of compact.matchAll(re)) {
    if (m[0] === '') continue;
    const zc = atomicNumber(m[1]!);
    if (zc === 0) return null;
    const n = m[2] === '' ? 1 : Number(m[2]);
    if (!Number.isFinite(n)) return null;
    out.set(zc, (out.get(zc) ?? 0) + n);
    consumed += m[0].length;
  }
  return consumed === compact.length && out.size > 0 ? out : null;
}

