// The sift report's page data: the landscape reshaped into columns (one array per field, indexed by
// structure index) so that 10,000 structures stay a few MB and parse quickly, plus what the page
// would otherwise compute: EMD colour classes of the neighbourhood lines, the nearest-neighbour
// histogram, and the kept structures' AMD vectors packed compactly in base64 (see packAmd).
import type { ConvergenceCurve, Embedding, Landscape, SiftParameters, Status, StructureRow } from '../landscape/schema.js';
import { colourClasses, FAMILY_COLOURS, stepColourscale, UNASSIGNED_COLOUR, VIRIDIS_STOPS } from './colours.js';
import { logHistogram, type LogHistogram } from './log-histogram.js';
import { compareWithWindows, type WindowComparison } from './window-compare.js';
import { mapQuality, type MapQuality } from './map-quality.js';
import { convergenceRuleText, fromKjPerMol } from '../landscape/convergence.js';
import { symbolSpellings } from '../geometry/symbol-spellings.js';
import { formatWrittenIn } from '../landscape/written-in.js';
import { FLAG_MEANINGS } from '../landscape/flags.js';

/** Largest number of colour classes the neighbourhood lines are binned into (one SVG path each). */
export const EDGE_CLASSES = 8;

export const STATUS_CODES: readonly Status[] = ['kept', 'duplicate', 'rejected', 'outside-window'];

export interface StructureColumns {
  id: string[];
  /** Index into `SiftPageData.files`. */
  file: number[];
  /** Block name, null when it equals the id (the usual case; keeps the page small). */
  block: Array<string | null>;
  line: number[];
  /** Index into `STATUS_CODES`. */
  status: number[];
  reason: string[];
  energy: Array<number | null>;
  energyRel: Array<number | null>;
  density: Array<number | null>;
  atoms: Array<number | null>;
  spaceGroup: Array<string | null>;
  /** International Tables number of `spaceGroup` (null when unknown). */
  sgNumber: Array<number | null>;
  /** 1 when the group was detected in the atoms, 0 when the declared one is reported, null for rejected blocks. */
  sgDetected: Array<number | null>;
  /** The group the file declares (one spelling per setting). */
  sgDeclared: Array<string | null>;
  /** Kept structures: the declared groups of the members, 'P1 x 7; P21/c x 2'; '' for the others. */
  writtenIn: string[];
  z: Array<number | null>;
  zPrime: Array<number | null>;
  /** Index into `SiftPageData.formulas` (the structure's formulas joined with ", "). */
  formula: number[];
  keptIndex: Array<number | null>;
  distanceToKept: Array<number | null>;
  family: number[];
  nearestIndex: Array<number | null>;
  nearestDistance: Array<number | null>;
  nnDistance: Array<number | null>;
  members: number[];
  notes: string[][];
  /** a, b, c (Å), alpha, beta, gamma (degrees) and volume (Å³, null when the angles span no cell) as read, rounded as shown, or null. */
  cell: Array<Array<number | null> | null>;
  /** Index into `SiftPageData.flagSets` (the row's flag codes joined with a space; '' for none). */
  flags: number[];
  /** Index into `SiftPageData.formulas` of the compared composition ('' when unknown). */
  composition: number[];
  otherChemistryIndex: Array<number | null>;
  otherChemistryDistance: Array<number | null>;
  energyOffset: Array<number | null>;
  flatPartnerIndices: Array<number[] | null>;
}

export interface EdgeClasses {
  /** Class boundaries in Å (round numbers, at most EDGE_CLASSES + 1 values; 2 equal values when all edges have one length). */
  boundsAngstrom: number[];
  colours: string[];
  /** Plotly colourscale drawing the classes as bands, for the legend colour bar. */
  colourscale: Array<[number, string]>;
  /** Tick labels of the colour bar, one per bound, with the decimals the step needs. */
  tickText: string[];
}

export interface SiftPageData {
  kind: 'sift';
  title: string;
  tool: { name: string; version: string };
  createdAt: string;
  timingsSeconds: Record<string, number>;
  parameters: SiftParameters;
  counts: Landscape['counts'];
  lowestEnergy: number | null;
  statusCodes: readonly Status[];
  files: string[];
  formulas: string[];
  /** Distinct flag sets of the rows (joined codes), '' first. */
  flagSets: string[];
  /** Flag code -> what it means (src/landscape/flags.ts), and the run's counts. */
  flagMeanings: Record<string, string>;
  flagCounts: Landscape['flagCounts'];
  /** How the duplicate tolerance was chosen (null when given). */
  toleranceChoice: Landscape['toleranceChoice'];
  s: StructureColumns;
  kept: number[];
  /** Flat [i, j, EMD Å] triplets. */
  edges: number[];
  /** Colour class of each edge (same order as `edges` triplets). */
  edgeClass: number[];
  /**
   * Rank of each edge: 1 when it joins a structure to its nearest kept neighbour, 2 to its second nearest, ...
   * (the better of its two ends). The page shows edges up to a chosen rank.
   */
  edgeRank: number[];
  edgeClasses: EdgeClasses;
  /** The landscape's first view: zoomed on the low-energy region when the landscape reaches well beyond it. */
  view: LandscapeView;
  /** What energy/density windows would have made of the kept structures (null without energies). */
  windows: WindowComparison | null;
  /** How far the metric map can be trusted (null without a map). */
  mapQuality: MapQuality | null;
  familyColours: readonly string[];
  unassignedColour: string;
  /** Family id -> number of kept structures. */
  familySizes: Array<[number, number]>;
  embedding: Embedding | null;
  /** AMD rows of kept structures: `index[r]` is the structure of row r; `base64` holds rows*k values (see packAmd). */
  amd: PackedAmd | null;
  amdStepAngstrom: number;
  nnHistogram: LogHistogram;
  convergence: ConvergenceCurve | null;
  /** The verdict rule in words (src/landscape/convergence.ts). */
  convergenceRule: string | null;
  /** Per space-group number (all 230): its common spellings (lower case, ' | ' between), for the table filter. */
  groupSpellings: Array<[number, string]>;
}

let spellingsOfAll: Array<[number, string]> | null = null;
/** The spellings of the 230 groups (about 20 kB), built once. */
function allSpellings(): Array<[number, string]> {
  if (spellingsOfAll === null) spellingsOfAll = Array.from({ length: 230 }, (_, i) => [i + 1, symbolSpellings(i + 1).join(' | ')]);
  return spellingsOfAll;
}

export interface LandscapeView {
  /** The low-energy window in the landscape's unit (10 kJ/mol converted), or null without energies. */
  lowWindow: number | null;
  /** Axis ranges of the first view, or null when every kept structure already fits the low-energy window. */
  zoom: { densityRange: [number, number]; energyRange: [number, number] } | null;
  /** Kept structures inside the first view. */
  inView: number;
  /** Lines per structure shown at first. */
  lineRank: number;
  /**
   * Longest line (EMD, Å) shown at first: the lower quartile of the nearest-neighbour links, so the first view
   * shows the pairs that are unusually close for this landscape; null (no cut) with fewer than 8 links.
   */
  lineMaxAngstrom: number | null;
}

/** The low-energy region the report opens on: within 10 kJ/mol of the lowest (common practice; DESIGN facts: polymorph pairs rarely differ by more). */
export const LOW_ENERGY_WINDOW_KJ_PER_MOL = 10;
/** Lines per structure shown at first (its nearest kept neighbour); the page's control shows more. */
export const DEFAULT_LINE_RANK = 1;
/** Quantile of the nearest-neighbour links' EMDs up to which lines are shown at first. */
export const DEFAULT_LINE_QUANTILE = 0.25;

/** Reshape a landscape for the page. Throws with a clear message when the landscape is inconsistent. */
export function buildSiftPageData(landscape: Landscape, title: string): SiftPageData {
  const rows = landscape.structures;
  const n = rows.length;
  const files: string[] = [];
  const fileIds = new Map<string, number>();
  const formulas: string[] = [];
  const formulaIds = new Map<string, number>();
  const s: StructureColumns = {
    id: [], file: [], block: [], line: [], status: [], reason: [], energy: [], energyRel: [], density: [],
    atoms: [], spaceGroup: [], sgNumber: [], sgDetected: [], sgDeclared: [], writtenIn: [], z: [], zPrime: [], formula: [], keptIndex: [],
    distanceToKept: [], family: [], nearestIndex: [], nearestDistance: [], nnDistance: [], members: [], notes: [], cell: [],
    flags: [], composition: [], otherChemistryIndex: [], otherChemistryDistance: [], energyOffset: [], flatPartnerIndices: [],
  };
  const flagSets: string[] = [''];
  const flagSetIds = new Map<string, number>([['', 0]]);
  for (let i = 0; i < n; i++) {
    const r = rows[i]!;
    if (r.index !== i) throw new Error(`landscape: structures[${i}] has index ${r.index}; structures must be in input order`);
    const status = STATUS_CODES.indexOf(r.status);
    if (status < 0) throw new Error(`landscape: structure ${r.id} has an unknown status "${String(r.status)}"`);
    s.id.push(String(r.id));
    s.file.push(intern(String(r.file), files, fileIds));
    s.block.push(String(r.block) === String(r.id) ? null : String(r.block));
    s.line.push(r.line);
    s.status.push(status);
    s.reason.push(r.reason ?? '');
    s.energy.push(sig(r.energy));
    s.energyRel.push(sig(r.energyRel));
    s.density.push(sig(r.densityGPerCm3));
    s.atoms.push(r.atoms);
    s.spaceGroup.push(r.spaceGroup);
    const sym = r.symmetry ?? null;
    s.sgNumber.push(sym?.number ?? null);
    s.sgDetected.push(sym === null ? null : sym.source === 'detected' ? 1 : 0);
    s.sgDeclared.push(sym?.declared ?? null);
    s.writtenIn.push(formatWrittenIn(r.writtenIn ?? []));
    s.z.push(r.z);
    s.zPrime.push(r.zPrime);
    s.formula.push(intern((r.formulas ?? []).join(', '), formulas, formulaIds));
    s.keptIndex.push(r.keptIndex);
    s.distanceToKept.push(sig(r.distanceToKept));
    s.family.push(r.family);
    s.nearestIndex.push(r.nearestIndex);
    s.nearestDistance.push(sig(r.nearestDistance));
    s.nnDistance.push(sig(r.nnDistance));
    s.members.push(r.members);
    s.notes.push(r.notes ?? []);
    s.cell.push(cellOf(r));
    s.flags.push(intern((r.flags ?? []).join(' '), flagSets, flagSetIds));
    s.composition.push(intern(r.composition ?? '', formulas, formulaIds));
    s.otherChemistryIndex.push(r.otherChemistryIndex ?? null);
    s.otherChemistryDistance.push(sig(r.otherChemistryDistance));
    s.energyOffset.push(sig(r.energyOffset));
    s.flatPartnerIndices.push(r.flatPartnerIndices && r.flatPartnerIndices.length > 0 ? r.flatPartnerIndices : null);
  }
  for (const k of landscape.kept) {
    if (!(k >= 0 && k < n) || rows[k]!.status !== 'kept') throw new Error(`landscape: kept entry ${k} is not a kept structure`);
  }

  const edges: number[] = [];
  let dMin = Infinity;
  let dMax = -Infinity;
  for (const [a, b, d] of landscape.edges) {
    if (!(a >= 0 && a < n && b >= 0 && b < n)) throw new Error(`landscape: edge [${a}, ${b}] names a structure that does not exist`);
    edges.push(a, b, sig(d) as number);
    if (d < dMin) dMin = d;
    if (d > dMax) dMax = d;
  }
  const edgeClasses = buildEdgeClasses(dMin, dMax);
  const edgeClass: number[] = [];
  for (const e of landscape.edges) edgeClass.push(edgeClassOf(e[2], edgeClasses.boundsAngstrom));
  const edgeRank = edgeRanks(landscape.edges);
  const view = landscapeView(landscape);
  view.lineMaxAngstrom = defaultLineMax(landscape.edges, edgeRank);

  const familySizes = new Map<number, number>();
  for (const k of landscape.kept) {
    const f = rows[k]!.family;
    familySizes.set(f, (familySizes.get(f) ?? 0) + 1);
  }

  const nn: Array<number | null> = [];
  for (const r of rows) if (r.status === 'kept' || r.status === 'duplicate') nn.push(r.nnDistance);

  return {
    kind: 'sift',
    title,
    tool: { name: landscape.tool.name, version: landscape.tool.version },
    createdAt: landscape.run.createdAt,
    timingsSeconds: landscape.run.timingsSeconds,
    parameters: landscape.parameters,
    counts: landscape.counts,
    lowestEnergy: landscape.lowestEnergy,
    statusCodes: STATUS_CODES,
    groupSpellings: allSpellings(),
    files,
    formulas,
    flagSets,
    flagMeanings: FLAG_MEANINGS,
    flagCounts: landscape.flagCounts ?? { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 },
    toleranceChoice: landscape.toleranceChoice ?? null,
    s,
    kept: landscape.kept,
    edges,
    edgeClass,
    edgeRank,
    edgeClasses,
    view,
    windows: compareWithWindows(landscape),
    mapQuality: mapQuality(landscape.embedding),
    familyColours: FAMILY_COLOURS,
    unassignedColour: UNASSIGNED_COLOUR,
    familySizes: [...familySizes.entries()].sort((a, b) => a[0] - b[0]),
    embedding: landscape.embedding
      ? {
          method: landscape.embedding.method,
          quality: landscape.embedding.quality,
          coords: landscape.embedding.coords.map(([x, y]) => [sig(x) as number, sig(y) as number]),
        }
      : null,
    amd: packAmd(landscape),
    amdStepAngstrom: AMD_STEP_ANGSTROM,
    nnHistogram: logHistogram(nn, 10),
    convergence: landscape.convergence,
    convergenceRule: landscape.convergence?.tail ? convergenceRuleText(Math.round(landscape.convergence.tail.fraction * 100)) : null,
  };
}

/**
 * EMD classes of equal width whose bounds are round numbers (a step of 1, 2, 2.5 or 5 times a power of ten), from
 * the largest multiple of the step at or below the shortest edge to the smallest at or above the longest, with at
 * most EDGE_CLASSES classes: the colour bar's ticks then read 0.15, 0.20, 0.25 Å instead of 0.0437, 0.0830.
 */
export function buildEdgeClasses(dMinAngstrom: number, dMaxAngstrom: number): EdgeClasses {
  if (!Number.isFinite(dMinAngstrom) || !Number.isFinite(dMaxAngstrom)) {
    return { boundsAngstrom: [], colours: [], colourscale: [], tickText: [] };
  }
  if (!(dMaxAngstrom > dMinAngstrom)) {
    const colours = [colourClasses(VIRIDIS_STOPS, 1)[0]!];
    return { boundsAngstrom: [dMinAngstrom, dMaxAngstrom], colours, colourscale: stepColourscale(colours), tickText: [roundLabel(dMinAngstrom)] };
  }
  const { lo, step, classes } = roundClasses(dMinAngstrom, dMaxAngstrom, EDGE_CLASSES);
  const bounds: number[] = [];
  for (let c = 0; c <= classes; c++) bounds.push(Number((lo + c * step).toPrecision(12)));
  const colours = colourClasses(VIRIDIS_STOPS, classes);
  const decimals = decimalsOf(step);
  return { boundsAngstrom: bounds, colours, colourscale: stepColourscale(colours), tickText: bounds.map((b) => b.toFixed(decimals)) };
}

/** Round steps: 1, 2, 2.5 and 5 times powers of ten (common practice for axis ticks). */
const ROUND_STEPS = [1, 2, 2.5, 5];

/**
 * The smallest round step that covers [lo, hi] with at most `maxClasses` classes whose bounds are multiples of the
 * step, and the first bound and the number of classes.
 */
export function roundClasses(lo: number, hi: number, maxClasses: number): { lo: number; step: number; classes: number } {
  const raw = (hi - lo) / maxClasses;
  let exp = Math.floor(Math.log10(raw));
  for (;;) {
    for (const m of ROUND_STEPS) {
      const step = m * 10 ** exp;
      // A tiny relative slack keeps values that are multiples already (0.3 / 0.1) from gaining a class.
      const first = Math.floor(lo / step + 1e-9);
      const last = Math.ceil(hi / step - 1e-9);
      if (last - first <= maxClasses && last > first) return { lo: first * step, step, classes: last - first };
    }
    exp++;
  }
}

/** Decimals needed to print multiples of a round step exactly (0.25 -> 2, 0.05 -> 2, 2 -> 0). */
export function decimalsOf(step: number): number {
  for (let d = 0; d < 12; d++) if (Math.abs(Math.round(step * 10 ** d) - step * 10 ** d) < 1e-6) return d;
  return 12;
}

function roundLabel(x: number): string {
  return String(Number(x.toPrecision(3)));
}

/** Rank of each edge among its ends' neighbours (nearest first, ties by the other end's index), the smaller of the two. */
export function edgeRanks(edges: ReadonlyArray<readonly [number, number, number]>): number[] {
  const byNode = new Map<number, number[]>();
  edges.forEach(([a, b], q) => {
    (byNode.get(a) ?? byNode.set(a, []).get(a)!).push(q);
    (byNode.get(b) ?? byNode.set(b, []).get(b)!).push(q);
  });
  const rank = new Array<number>(edges.length).fill(Infinity);
  for (const [node, qs] of byNode) {
    const other = (q: number) => (edges[q]![0] === node ? edges[q]![1] : edges[q]![0]);
    qs.sort((x, y) => edges[x]![2] - edges[y]![2] || other(x) - other(y));
    qs.forEach((q, r) => {
      if (r + 1 < rank[q]!) rank[q] = r + 1;
    });
  }
  return rank;
}

/**
 * The longest line shown at first: the DEFAULT_LINE_QUANTILE quantile (linear interpolation between order
 * statistics, numpy's default) of the EMDs of rank-1 edges, rounded up to 3 significant digits; null below 8 edges.
 */
export function defaultLineMax(edges: ReadonlyArray<readonly [number, number, number]>, rank: readonly number[]): number | null {
  const d = edges.filter((_e, q) => rank[q] === 1).map((e) => e[2]).sort((a, b) => a - b);
  if (d.length < 8) return null;
  const pos = DEFAULT_LINE_QUANTILE * (d.length - 1);
  const lo = Math.floor(pos);
  const v = d[lo]! + (pos - lo) * ((d[Math.min(lo + 1, d.length - 1)]! - d[lo]!));
  const p = 10 ** (Math.floor(Math.log10(v)) - 2);
  return Number((Math.ceil(v / p - 1e-9) * p).toPrecision(3));
}

/**
 * The first view: when some kept structure lies more than 20% beyond the low-energy window, zoom on the window
 * (energies from just below 0 to just above it, densities of the structures inside it, padded).
 */
export function landscapeView(landscape: Landscape): LandscapeView {
  const rows = landscape.structures;
  const kept = landscape.kept.filter((k) => rows[k]!.densityGPerCm3 !== null);
  if (landscape.lowestEnergy === null) return { lowWindow: null, zoom: null, inView: kept.length, lineRank: DEFAULT_LINE_RANK, lineMaxAngstrom: null };
  const lowWindow = Number(fromKjPerMol(LOW_ENERGY_WINDOW_KJ_PER_MOL, landscape.parameters.energyUnit).toPrecision(4));
  let highest = 0;
  for (const k of kept) highest = Math.max(highest, rows[k]!.energyRel ?? 0);
  const low = kept.filter((k) => rows[k]!.energyRel !== null && (rows[k]!.energyRel as number) <= lowWindow);
  if (highest <= 1.2 * lowWindow || low.length === 0) return { lowWindow, zoom: null, inView: kept.length, lineRank: DEFAULT_LINE_RANK, lineMaxAngstrom: null };
  let dLo = Infinity;
  let dHi = -Infinity;
  for (const k of low) {
    const d = rows[k]!.densityGPerCm3 as number;
    dLo = Math.min(dLo, d);
    dHi = Math.max(dHi, d);
  }
  const dPad = Math.max(0.005, 0.06 * (dHi - dLo));
  const ePad = 0.04 * lowWindow;
  const densityRange: [number, number] = [sig(dLo - dPad) as number, sig(dHi + dPad) as number];
  const energyRange: [number, number] = [sig(-ePad) as number, sig(lowWindow + ePad) as number];
  const inView = kept.filter((k) => {
    const e = rows[k]!.energyRel;
    const d = rows[k]!.densityGPerCm3 as number;
    return e !== null && e >= energyRange[0] && e <= energyRange[1] && d >= densityRange[0] && d <= densityRange[1];
  }).length;
  return { lowWindow, zoom: { densityRange, energyRange }, inView, lineRank: DEFAULT_LINE_RANK, lineMaxAngstrom: null };
}

/** Class of an EMD value: bins are [b_c, b_c+1), the last one closed. */
export function edgeClassOf(dAngstrom: number, bounds: readonly number[]): number {
  const classes = bounds.length - 1;
  for (let c = classes - 1; c > 0; c--) if (dAngstrom >= bounds[c]!) return c;
  return 0;
}

/** Resolution of the packed AMD values in Å (far below any difference the panel is there to show). */
export const AMD_STEP_ANGSTROM = 1e-4;

export interface PackedAmd {
  k: number;
  index: number[];
  /**
   * `u16-delta`: per row, the AMD on a grid of AMD_STEP_ANGSTROM, stored as differences between
   * consecutive values (AMD is non-decreasing: each PDD row is sorted ascending) in little-endian Uint16;
   * half the size of Float32. `f32`: little-endian Float32, used when a value does not fit the grid.
   */
  encoding: 'u16-delta' | 'f32';
  base64: string;
}

/** Pack the kept structures' AMD vectors for the page. */
export function packAmd(landscape: Landscape): PackedAmd | null {
  const inv = landscape.invariants;
  if (!inv || inv.kept.length === 0) return null;
  const k = inv.kept[0]!.amd.length;
  const index: number[] = [];
  for (const row of inv.kept) {
    if (row.amd.length !== k) throw new Error(`landscape: AMD of structure ${row.index} has ${row.amd.length} values, expected ${k}`);
    index.push(row.index);
  }
  const u16 = Buffer.alloc(inv.kept.length * k * 2);
  let fits = true;
  for (let r = 0; r < inv.kept.length && fits; r++) {
    const amd = inv.kept[r]!.amd;
    let prev = 0;
    for (let j = 0; j < k; j++) {
      const q = Math.round(amd[j]! / AMD_STEP_ANGSTROM);
      const d = q - prev;
      if (!(d >= 0 && d <= 0xffff)) {
        fits = false;
        break;
      }
      u16.writeUInt16LE(d, (r * k + j) * 2);
      prev = q;
    }
  }
  if (fits) return { k, index, encoding: 'u16-delta', base64: u16.toString('base64') };
  const f32 = Buffer.alloc(inv.kept.length * k * 4);
  inv.kept.forEach((row, r) => {
    for (let j = 0; j < k; j++) f32.writeFloatLE(row.amd[j]!, (r * k + j) * 4);
  });
  return { k, index, encoding: 'f32', base64: f32.toString('base64') };
}

/** Decode one row of packed AMD values (the page does the same in report-common.js). */
export function unpackAmdRow(packed: PackedAmd, row: number): Float64Array {
  const buf = Buffer.from(packed.base64, 'base64');
  const out = new Float64Array(packed.k);
  if (packed.encoding === 'f32') {
    for (let j = 0; j < packed.k; j++) out[j] = buf.readFloatLE((row * packed.k + j) * 4);
  } else {
    let q = 0;
    for (let j = 0; j < packed.k; j++) {
      q += buf.readUInt16LE((row * packed.k + j) * 2);
      out[j] = q * AMD_STEP_ANGSTROM;
    }
  }
  return out;
}

/**
 * The row's cell as [a, b, c, alpha, beta, gamma, volume] rounded as the page shows them (lengths to 0.001 Å, angles
 * to 0.01 degrees, volume to 0.1 Å³; the page then prints them exactly, and 25,000 rows cost about a third less than at
 * 7 significant digits), or null when the row has no cell. The volume alone may be null (angles that span no cell).
 */
function cellOf(r: StructureRow): Array<number | null> | null {
  const c = r.cell;
  if (!c) return null;
  return [fixed(c.a, 3), fixed(c.b, 3), fixed(c.c, 3), fixed(c.alpha, 2), fixed(c.beta, 2), fixed(c.gamma, 2), fixed(c.volume, 1)];
}

/** A number rounded to `decimals` places (as toFixed rounds), or null when missing. */
function fixed(x: number | null, decimals: number): number | null {
  return x === null || !Number.isFinite(x) ? null : Number(x.toFixed(decimals));
}

function intern(value: string, table: string[], ids: Map<string, number>): number {
  let id = ids.get(value);
  if (id === undefined) {
    id = table.length;
    table.push(value);
    ids.set(value, id);
  }
  return id;
}

// Seven significant digits: far below what the page displays, and it keeps the JSON small.
function sig(x: number | null | undefined): number | null {
  if (x === null || x === undefined || !Number.isFinite(x)) return null;
  return Number(x.toPrecision(7));
}
