// A real mini crystal structure search for the demo: random packings of the invented rigid molecule in common
// space groups (Z' = 1), each relaxed under the pair potential of ./potential.ts (./relax.ts), so that
// different starts fall into the same lattice-energy minimum and differ only by the optimiser's stopping noise,
// in whatever cell and origin each run ended in. Deterministic from the seed (apart from the measured seconds).
import { makeRng } from '../prng.js';
import { mapInWorkers } from '../../parallel/pool.js';
import { MOLECULE_NAME, orvazinone, type MoleculeTemplate } from '../molecule.js';
import { GROUPS, IT_NUMBER, type GeneratedGroup } from '../space-groups.js';
import { contactRatio, drawPacking, groupOps } from '../packing.js';
import { basisFromCell, det, inverse, vecMat } from '../mat3.js';
import { shuffleAtoms, wrapMolecules, type Expressed } from '../rewrite.js';
import { writeCifBlock } from '../cif-block.js';
import { pairTable, CUTOFF_ANGSTROM } from './potential.js';
import { makeRelaxModel, relaxState, type RelaxModel, type RigidState } from './relax.js';

/** The common space groups of organic crystals the search uses by default (common practice). */
export const SEARCH_GROUPS: GeneratedGroup[] = ['P21/c', 'P-1', 'P212121', 'C2/c', 'P21'];

const AVOGADRO = 6.02214076e23;
/** Starts are scaled to this density, inside the usual 1.1–1.6 g/cm3 of organic crystals (common practice), then loosened until no contact is too short. */
const START_DENSITY_G_PER_CM3 = 1.25;
/**
 * A relaxed packing whose closest intermolecular contact is below this fraction of G's contact limit
 * (0.85 x the Bondi radius sum, src/demo/packing.ts) is unphysical and rejected: 0.8 x 0.85 = 0.68 of the sum.
 */
const MIN_CONTACT_RATIO = 0.8;
/**
 * A relaxed packing below this density has come apart: its molecules stopped touching along some direction, where
 * the truncated potential is flat, and the optimiser stalled there (organic crystals: roughly 1.1–1.6 g/cm3; common practice).
 */
const MIN_DENSITY_G_PER_CM3 = 0.9;

export interface MiniSearchOptions {
  seed: number;
  /** Random starts, spread over the groups in turn. */
  starts: number;
  /** Space groups (names of src/demo/space-groups.ts); default SEARCH_GROUPS. */
  groups?: string[];
  /** Called after every start (in order, or per finished chunk with worker threads) with the number done and the total. */
  onProgress?: (done: number, total: number) => void;
  /** Block id prefix; default "start" (ids are prefix-NNNN with the start's number, so rejected starts leave gaps). */
  idPrefix?: string;
}

/** One relaxed start that passed the checks. */
export interface SearchStructure {
  id: string;
  /** 0-based start number. */
  start: number;
  group: GeneratedGroup;
  startEnergyKjPerMol: number;
  energyKjPerMol: number;
  densityGPerCm3: number;
  iterations: number;
  /** Largest gradient component at the end (kJ/mol per optimiser unit, see relax.ts). */
  gradientMax: number;
  /** Final optimiser state (cell, centre, orientation), enough to evaluate the energy again. */
  state: RigidState;
}

export interface RejectedStart {
  start: number;
  group: GeneratedGroup;
  reason: string;
}

export interface MiniSearchResult {
  moleculeName: string;
  /** Multi-block CIF, one block per relaxed structure, operations listed, in the cell the optimiser ended in. */
  cif: string;
  /** CSV with columns id, energy (kJ/mol per molecule). */
  energiesCsv: string;
  ids: string[];
  energiesKjPerMol: number[];
  densitiesGPerCm3: number[];
  /** Space group per structure. */
  groups: string[];
  structures: SearchStructure[];
  rejected: RejectedStart[];
  starts: number;
  seconds: number;
}

/** What one start produced: a relaxed structure and its CIF block, or the reason it was rejected. */
export type StartOutcome = { kind: 'relaxed'; structure: SearchStructure; block: string } | { kind: 'rejected'; rejected: RejectedStart };

/** A contiguous range of starts [from, to) of one search, the unit of work sent to a worker thread. */
export interface StartRange {
  seed: number;
  starts: number;
  from: number;
  to: number;
  groups: GeneratedGroup[];
  idPrefix: string;
}

/** Starts per chunk sent to a worker: small enough to balance two threads, large enough to keep messages rare. */
const STARTS_PER_CHUNK = 10;

/**
 * The search on the calling thread. Every start draws from its own seeded stream (startSeed), so a start's outcome
 * depends only on the seed and its number: the same search split over worker threads (runMiniSearchInWorkers)
 * writes the same CIF byte for byte.
 */
export function runMiniSearch(options: MiniSearchOptions): MiniSearchResult {
  const t0 = performance.now();
  const range = fullRange(options);
  const outcomes: StartOutcome[] = [];
  const work = new StartWork();
  for (let s = 0; s < options.starts; s++) {
    outcomes.push(work.run(range, s));
    options.onProgress?.(s + 1, options.starts);
  }
  return assemble(range, outcomes, (performance.now() - t0) / 1000);
}

/** The same search with its starts relaxed in worker threads (src/parallel/pool.ts); identical output. */
export async function runMiniSearchInWorkers(options: MiniSearchOptions & { threads?: number }): Promise<MiniSearchResult> {
  const t0 = performance.now();
  const range = fullRange(options);
  const chunks: StartRange[] = [];
  for (let from = 0; from < options.starts; from += STARTS_PER_CHUNK) chunks.push({ ...range, from, to: Math.min(options.starts, from + STARTS_PER_CHUNK) });
  const ext = import.meta.url.endsWith('.ts') ? '.ts' : '.js';
  let done = 0;
  const parts = await mapInWorkers<StartRange, StartOutcome[]>(new URL(`./search${ext}`, import.meta.url).href, 'relaxStartRange', chunks, {
    threads: options.threads,
    onProgress: (finished) => {
      done = Math.min(options.starts, finished * STARTS_PER_CHUNK);
      options.onProgress?.(done, options.starts);
    },
  });
  return assemble(range, parts.flat(), (performance.now() - t0) / 1000);
}

/** Worker entry point: relax starts [from, to) of a search. */
export function relaxStartRange(range: StartRange): StartOutcome[] {
  const work = new StartWork();
  const out: StartOutcome[] = [];
  for (let s = range.from; s < range.to; s++) out.push(work.run(range, s));
  return out;
}

/**
 * The seed of start s's own random stream: the search seed and the start number mixed by the 32-bit finaliser of
 * MurmurHash3 (public domain; common practice), so neighbouring starts get unrelated streams.
 */
export function startSeed(seed: number, start: number): number {
  let h = (Math.imul(seed >>> 0, 0x9e3779b1) ^ Math.imul(start + 1, 0x85ebca6b)) >>> 0;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

function fullRange(options: MiniSearchOptions): StartRange {
  if (!(Number.isInteger(options.starts) && options.starts >= 1)) throw new Error(`starts must be a whole number >= 1, not ${options.starts}`);
  const groups = (options.groups ?? SEARCH_GROUPS).map((g) => {
    if (!(g in GROUPS)) throw new Error(`the demo search knows no space group '${g}' (it knows ${Object.keys(GROUPS).join(', ')})`);
    return g as GeneratedGroup;
  });
  if (groups.length === 0) throw new Error('the demo search needs at least one space group');
  return { seed: options.seed, starts: options.starts, from: 0, to: options.starts, groups, idPrefix: options.idPrefix ?? 'start' };
}

/** The molecule, its pair table and one relaxation model per group, built once per thread and reused by every start. */
class StartWork {
  readonly mol = orvazinone();
  readonly table = pairTable(this.mol);
  private readonly models = new Map<GeneratedGroup, RelaxModel>();

  run(range: StartRange, s: number): StartOutcome {
    const group = range.groups[s % range.groups.length];
    const mol = this.mol;
    let model = this.models.get(group);
    if (!model) {
      model = makeRelaxModel(group, mol, this.table);
      this.models.set(group, model);
    }
    const rng = makeRng(startSeed(range.seed, s));
    const start = startFrom(group, mol, rng);
    if (!start) return { kind: 'rejected', rejected: { start: s, group, reason: 'the start clashes even when loosened' } };
    const out = relaxState(model, start);
    const relaxed = out.state;
    const basis = basisFromCell(...relaxed.cell);
    const frac = placeAtoms(model, relaxed);
    const density = densityOf(group, mol, basis);
    let reason = '';
    if (!Number.isFinite(out.energyKjPerMol)) reason = 'the packing collapsed during relaxation';
    else if (!out.lbfgs.converged) reason = `not converged (${out.lbfgs.stop})`;
    else if (contactRatio(basis, model.ops, frac, mol.elements) < MIN_CONTACT_RATIO) reason = 'an unphysically short contact after relaxation';
    else if (density < MIN_DENSITY_G_PER_CM3) reason = `the packing came apart (density ${density.toFixed(3)} g/cm3)`;
    else if (!(out.energyKjPerMol < 0)) reason = 'a non-negative lattice energy after relaxation';
    if (reason) return { kind: 'rejected', rejected: { start: s, group, reason } };
    const width = Math.max(4, String(range.starts).length);
    const id = `${range.idPrefix}-${String(s + 1).padStart(width, '0')}`;
    const structure: SearchStructure = {
      id,
      start: s,
      group,
      startEnergyKjPerMol: out.startEnergyKjPerMol,
      energyKjPerMol: out.energyKjPerMol,
      densityGPerCm3: density,
      iterations: out.lbfgs.iterations,
      gradientMax: out.lbfgs.gradientMax,
      state: relaxed,
    };
    // Written as the run ended: its own cell and origin, molecule moved into the cell, atoms in the order the
    // writer lists them (shuffled here, as searches that rebuild molecules from a connectivity table do).
    let e: Expressed = { basis, ops: model.ops, frac, elements: mol.elements.slice(), atomsPerMolecule: mol.elements.length };
    e = wrapMolecules(shuffleAtoms(e, rng));
    const block = writeCifBlock(e, { id, symbol: GROUPS[group].symbol, itNumber: IT_NUMBER[group], listOps: true });
    return { kind: 'relaxed', structure, block };
  }
}

/** The search's outputs from its starts' outcomes, in start order. */
function assemble(range: StartRange, outcomes: StartOutcome[], seconds: number): MiniSearchResult {
  const structures: SearchStructure[] = [];
  const rejected: RejectedStart[] = [];
  const blocks: string[] = [];
  for (const o of outcomes) {
    if (o.kind === 'rejected') rejected.push(o.rejected);
    else {
      structures.push(o.structure);
      blocks.push(o.block);
    }
  }
  const header =
    `# Invented search: ${range.starts} random starts of the invented rigid molecule ${MOLECULE_NAME} in ${range.groups.join(', ')}, ` +
    `relaxed under an exp-6 plus point-charge pair potential (cutoff ${CUTOFF_ANGSTROM} A), seed ${range.seed}\n`;
  return {
    moleculeName: MOLECULE_NAME,
    cif: header + blocks.join('\n'),
    energiesCsv: `id,energy\n${structures.map((x) => `${x.id},${x.energyKjPerMol.toFixed(4)}`).join('\n')}\n`,
    ids: structures.map((x) => x.id),
    energiesKjPerMol: structures.map((x) => x.energyKjPerMol),
    densitiesGPerCm3: structures.map((x) => x.densityGPerCm3),
    groups: structures.map((x) => x.group),
    structures,
    rejected,
    starts: range.starts,
    seconds,
  };
}

/**
 * A random start: G's random cell shape, orientation and centre, the cell scaled to START_DENSITY_G_PER_CM3 and
 * then loosened in 3% steps until no contact is too short. Null when it still clashes after 40 steps (a molecule
 * sitting on a symmetry element clashes with its own copy however loose the cell).
 */
export function startFrom(group: GeneratedGroup, mol: MoleculeTemplate, rng: ReturnType<typeof makeRng>): RigidState | null {
  const draw = drawPacking(group, mol, rng);
  const ops = groupOps(group);
  const cell = draw.cell.slice() as RigidState['cell'];
  const scale = Math.cbrt(densityOf(group, mol, basisFromCell(...cell)) / START_DENSITY_G_PER_CM3);
  for (let k = 0; k < 3; k++) cell[k] *= scale;
  const state: RigidState = { group, cell, centreFrac: [draw.centre[0], draw.centre[1], draw.centre[2]], orient: draw.orient };
  for (let step = 0; step < 40; step++) {
    const basis = basisFromCell(...state.cell);
    if (contactRatio(basis, ops, fracOf(mol.xyz, state, basis), mol.elements) >= 1) return state;
    for (let k = 0; k < 3; k++) state.cell[k] *= 1.03;
  }
  return null;
}

function densityOf(group: GeneratedGroup, mol: MoleculeTemplate, basis: number[]): number {
  return (GROUPS[group].xyz.length * mol.massGPerMol) / (AVOGADRO * det(basis) * 1e-24);
}

function placeAtoms(model: RelaxModel, s: RigidState): Float64Array {
  return fracOf(model.mol.xyz, s, basisFromCell(...s.cell));
}

/** Fractional coordinates of molecule 0: centroid plus the rotated template. */
function fracOf(xyz: Float64Array, s: RigidState, basis: number[]): Float64Array {
  const inv = inverse(basis);
  const c = vecMat(s.centreFrac, basis);
  const o = s.orient;
  const out = new Float64Array(xyz.length);
  for (let i = 0; i < xyz.length / 3; i++) {
    const x = xyz[3 * i];
    const y = xyz[3 * i + 1];
    const z = xyz[3 * i + 2];
    const f = vecMat([c[0] + o[0] * x + o[1] * y + o[2] * z, c[1] + o[3] * x + o[4] * y + o[5] * z, c[2] + o[6] * x + o[7] * y + o[8] * z], inv);
    out.set(f, 3 * i);
  }
  return out;
}
