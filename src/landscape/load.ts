// Read a sift output folder's `landscape.json` and check it against the contract in schema.ts, so that
// `diff` and `locate` can trust every index and array length they use. Each problem names the file and the field.
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import type { EnergyUnit, KeptInvariants, Landscape, StructureRow } from './schema.js';
import { DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL, DEFAULT_FLAT_DENSITY_G_PER_CM3, DEFAULT_FLAT_ENERGY_KJ_PER_MOL, inUnit } from './flags.js';
import { sharedNameNote, uniqueIds } from './unique-ids.js';

/** Row fields added after the first landscapes were written, with the value an older file stands for. */
const ROW_DEFAULTS: ReadonlyArray<[string, unknown]> = [
  ['flags', []], ['otherChemistryIndex', null], ['otherChemistry', null], ['otherComposition', null], ['otherChemistryDistance', null],
  ['energyOffset', null], ['flatPartnerIndices', []], ['flatPartners', []], ['flatPartnerDistance', null],
];
const STATUSES = new Set(['kept', 'duplicate', 'rejected', 'outside-window']);
const UNITS = new Set(['kJ/mol', 'kcal/mol', 'eV']);

/** Where the landscape of a sift output lives: `<dir>/landscape.json`, or the path itself when it is a file. */
export function landscapePath(dirOrFile: string): string {
  if (!existsSync(dirOrFile)) throw new Error(`${dirOrFile}: no such folder or file (expected the --out folder of a sift run)`);
  if (statSync(dirOrFile).isDirectory()) {
    const p = join(dirOrFile, 'landscape.json');
    if (!existsSync(p)) throw new Error(`${dirOrFile}: no landscape.json in this folder; is it the --out folder of a sift run?`);
    return p;
  }
  return dirOrFile;
}

/** Read and validate a landscape; throws one clear message naming the file and the first field at fault. */
export function loadLandscape(dirOrFile: string): { path: string; landscape: Landscape } {
  const path = landscapePath(dirOrFile);
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new Error(`${path}: cannot be read (${(err as Error).message})`);
  }
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (err) {
    throw new Error(`${path}: not valid JSON (${(err as Error).message}); the file may be truncated`);
  }
  return { path, landscape: validateLandscape(data, path) };
}

/** Check plain data against the landscape contract; `where` names the file in messages. */
export function validateLandscape(data: unknown, where: string): Landscape {
  const fail = (field: string, what: string): never => {
    throw new Error(`${where}: ${field} ${what}`);
  };
  if (!isObject(data)) return fail('the top level', 'is not a JSON object');
  if (data.format !== 'polysift-landscape') fail('"format"', `is ${JSON.stringify(data.format)}, expected "polysift-landscape" (is this a sift landscape.json?)`);
  if (data.formatVersion !== 1) fail('"formatVersion"', `is ${JSON.stringify(data.formatVersion)}; this polysift reads version 1 only`);

  const p = data.parameters;
  if (!isObject(p)) return fail('"parameters"', 'is missing');
  if (!isPositiveInt(p.k)) fail('"parameters.k"', 'must be a positive integer');
  if (p.hydrogens !== 'keep' && p.hydrogens !== 'drop') fail('"parameters.hydrogens"', 'must be "keep" or "drop"');
  if (!isFiniteNumber(p.toleranceAngstrom) || (p.toleranceAngstrom as number) < 0) fail('"parameters.toleranceAngstrom"', 'must be a non-negative number');
  if (!UNITS.has(p.energyUnit as string)) fail('"parameters.energyUnit"', 'must be one of kJ/mol, kcal/mol, eV');
  // Landscapes written before the energy basis existed had energies per molecule.
  if (p.energyBasis === undefined) p.energyBasis = 'molecule';
  else if (p.energyBasis !== 'molecule' && p.energyBasis !== 'cell') fail('"parameters.energyBasis"', 'must be "molecule" or "cell"');

  // Parameters added after the first landscapes were written: the behaviour those runs had, defaults for the flags.
  if (p.toleranceMode === undefined) p.toleranceMode = 'given';
  if (p.elementCheck === undefined) p.elementCheck = false;
  const unit = p.energyUnit as EnergyUnit;
  if (p.energyMismatch === undefined) p.energyMismatch = inUnit(DEFAULT_ENERGY_MISMATCH_KJ_PER_MOL, unit);
  if (p.flatEnergy === undefined) p.flatEnergy = inUnit(DEFAULT_FLAT_ENERGY_KJ_PER_MOL, unit);
  if (p.flatDensityGPerCm3 === undefined) p.flatDensityGPerCm3 = DEFAULT_FLAT_DENSITY_G_PER_CM3;
  if (data.toleranceChoice === undefined) data.toleranceChoice = null;

  const rows = data.structures;
  if (!Array.isArray(rows)) return fail('"structures"', 'is missing or not a list');
  const n = rows.length;
  rows.forEach((s: unknown, i: number) => {
    const f = `"structures[${i}]"`;
    if (!isObject(s)) return fail(f, 'is not an object');
    if (s.index !== i) fail(`${f}.index`, `is ${JSON.stringify(s.index)}, expected ${i} (structures must be in input order)`);
    if (typeof s.id !== 'string') fail(`${f}.id`, 'must be a string');
    if (!STATUSES.has(s.status as string)) fail(`${f}.status`, `is ${JSON.stringify(s.status)}`);
    for (const key of ['energy', 'energyRel', 'densityGPerCm3'] as const) {
      if (s[key] !== null && !isFiniteNumber(s[key])) fail(`${f}.${key}`, 'must be a number or null');
    }
    if (s.keptIndex !== null && !(isIndex(s.keptIndex, n))) fail(`${f}.keptIndex`, `must be a structure index below ${n} or null`);
    if (s.status === 'kept' && s.keptIndex !== i) fail(`${f}.keptIndex`, `must be ${i} for a kept structure`);
    if (!Array.isArray(s.formulas)) fail(`${f}.formulas`, 'must be a list');
    if (!Array.isArray(s.notes)) fail(`${f}.notes`, 'must be a list');
    // Landscapes written before rows carried their composition and flags read as unknown and unflagged.
    if (s.composition === undefined) s.composition = null;
    else if (s.composition !== null && typeof s.composition !== 'string') fail(`${f}.composition`, 'must be a string or null');
    for (const [key, empty] of ROW_DEFAULTS) if (s[key] === undefined) s[key] = structuredClone(empty);
    if (!Array.isArray(s.flags)) fail(`${f}.flags`, 'must be a list');
    // Landscapes written before rows carried their cell, or their symmetry, read as unknown.
    if (s.cell === undefined) s.cell = null;
    if (s.symmetry === undefined) s.symmetry = null;
    if (s.writtenIn === undefined) s.writtenIn = [];
    if (s.spaceGroup !== null && typeof s.spaceGroup !== 'string') fail(`${f}.spaceGroup`, 'must be a string or null');
    if (s.zPrime !== undefined && s.zPrime !== null && !isFiniteNumber(s.zPrime)) fail(`${f}.zPrime`, 'must be a number or null');
    else if (s.cell !== null && !(isObject(s.cell) && ['a', 'b', 'c', 'alpha', 'beta', 'gamma'].every((key) => isFiniteNumber((s.cell as Record<string, unknown>)[key]))))
      fail(`${f}.cell`, 'must be null or an object with numbers a, b, c, alpha, beta, gamma');
    return undefined;
  });

  const kept = data.kept;
  if (!Array.isArray(kept)) return fail('"kept"', 'is missing or not a list');
  const keptSet = new Set<number>();
  kept.forEach((k: unknown, j: number) => {
    if (!isIndex(k, n)) fail(`"kept[${j}]"`, `must be a structure index below ${n}`);
    if ((rows[k as number] as StructureRow).status !== 'kept') fail(`"kept[${j}]"`, `names structure ${k as number}, whose status is not "kept"`);
    if (keptSet.has(k as number)) fail(`"kept[${j}]"`, `repeats structure ${k as number}`);
    keptSet.add(k as number);
  });
  const keptCount = (rows as StructureRow[]).filter((s) => s.status === 'kept').length;
  if (keptCount !== kept.length) fail('"kept"', `lists ${kept.length} structures but ${keptCount} have status "kept"`);

  const inv = data.invariants;
  if (!isObject(inv)) return fail('"invariants"', 'is missing; diff and locate need the stored invariants');
  if (inv.k !== p.k) fail('"invariants.k"', `is ${JSON.stringify(inv.k)} but parameters.k is ${p.k as number}`);
  if (inv.hydrogens !== p.hydrogens) fail('"invariants.hydrogens"', `is ${JSON.stringify(inv.hydrogens)} but parameters.hydrogens is ${p.hydrogens as string}`);
  const k = p.k as number;
  if (!Array.isArray(inv.kept)) return fail('"invariants.kept"', 'is missing or not a list');
  const withInvariants = new Set<number>();
  inv.kept.forEach((e: unknown, j: number) => {
    const f = `"invariants.kept[${j}]"`;
    if (!isObject(e)) return fail(f, 'is not an object');
    if (!isIndex(e.index, n) || !keptSet.has(e.index as number)) fail(`${f}.index`, 'must name a kept structure');
    if (withInvariants.has(e.index as number)) fail(`${f}.index`, `repeats structure ${e.index as number}`);
    withInvariants.add(e.index as number);
    if (!isNumberList(e.amd) || (e.amd as number[]).length !== k) fail(`${f}.amd`, `must hold k = ${k} numbers`);
    if (!isNumberList(e.pddWeights) || (e.pddWeights as number[]).length === 0) fail(`${f}.pddWeights`, 'must be a non-empty list of numbers');
    const w = e.pddWeights as number[];
    if (!isNumberList(e.pddRows) || (e.pddRows as number[]).length !== w.length * k) {
      fail(`${f}.pddRows`, `must hold ${w.length} rows × k = ${k} numbers`);
    }
    let sum = 0;
    for (const x of w) {
      if (!(x > 0)) fail(`${f}.pddWeights`, 'must all be positive');
      sum += x;
    }
    if (Math.abs(sum - 1) > 1e-9) fail(`${f}.pddWeights`, `add up to ${sum}, not 1`);
    return undefined;
  });
  for (const k2 of kept as number[]) {
    if (!withInvariants.has(k2)) fail('"invariants.kept"', `has no entry for kept structure ${k2} (${(rows[k2] as StructureRow).id})`);
  }
  if (data.flagCounts === undefined) data.flagCounts = { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 };
  if (data.lowestEnergy !== null && !isFiniteNumber(data.lowestEnergy)) fail('"lowestEnergy"', 'must be a number or null');
  return data as unknown as Landscape;
}

/**
 * Landscapes written before ids were made unique can repeat an id (one block name in two input files). Give
 * such structures the ids sift gives them now (src/landscape/unique-ids.ts), in place, and re-derive the
 * references by index, so that diff and locate tables name one structure each. Returns a note, or null when
 * every id was already unique.
 */
export function ensureUniqueIds(landscape: Landscape, label: string): string | null {
  const rows = landscape.structures;
  const { ids, shared } = uniqueIds(rows.map((r) => r.id));
  let renamed = 0;
  rows.forEach((r, i) => {
    if (ids[i] === r.id) return;
    r.notes = [...r.notes, sharedNameNote(r.id, shared[i], ids[i])];
    r.id = ids[i];
    renamed++;
  });
  if (renamed === 0) return null;
  for (const r of rows) {
    if (r.status === 'duplicate' && typeof r.keptIndex === 'number' && rows[r.keptIndex]) r.duplicateOf = rows[r.keptIndex].id;
    if (typeof r.nearestIndex === 'number' && rows[r.nearestIndex]) r.nearest = rows[r.nearestIndex].id;
  }
  return `${label} repeats ${renamed} structure id(s) (block names shared by several inputs); they are called name~n here, n their place in input order.`;
}

/** The stored invariants of each kept structure, keyed by structure index. */
export function invariantsByIndex(landscape: Landscape): Map<number, KeptInvariants> {
  const map = new Map<number, KeptInvariants>();
  for (const e of landscape.invariants.kept) map.set(e.index, e);
  return map;
}

/** Energy rank (1 = lowest) of each kept structure, in the order of `landscape.kept`; null without energies. */
export function energyRanks(landscape: Landscape): Map<number, number | null> {
  const ranks = new Map<number, number | null>();
  const withEnergy = landscape.kept.filter((i) => landscape.structures[i].energy !== null);
  withEnergy.sort((x, y) => (landscape.structures[x].energy as number) - (landscape.structures[y].energy as number) || x - y);
  for (const i of landscape.kept) ranks.set(i, null);
  withEnergy.forEach((i, r) => ranks.set(i, r + 1));
  return ranks;
}

function isObject(x: unknown): x is Record<string, unknown> {
  return typeof x === 'object' && x !== null && !Array.isArray(x);
}
function isFiniteNumber(x: unknown): boolean {
  return typeof x === 'number' && Number.isFinite(x);
}
function isPositiveInt(x: unknown): boolean {
  return typeof x === 'number' && Number.isInteger(x) && x > 0;
}
function isIndex(x: unknown, n: number): boolean {
  return typeof x === 'number' && Number.isInteger(x) && x >= 0 && x < n;
}
function isNumberList(x: unknown): boolean {
  if (!Array.isArray(x)) return false;
  for (const v of x) if (typeof v !== 'number' || !Number.isFinite(v)) return false;
  return true;
}
