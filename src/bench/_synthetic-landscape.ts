// A realistic invented `Landscape` for report tests and the report benchmark: kept structures in
// families, each found one or more times (duplicates within optimiser-like noise), rejected blocks with
// reasons, exact nearest-neighbour edges, a 2D map, AMD curves and a convergence curve.
//
// The "EMD" between two kept structures is the Euclidean distance between hidden 2D positions, so the
// map coordinates reproduce it exactly and edges are the true k nearest neighbours of that metric.
// Nothing here is a physical calculation; it only has the shape real data has.
import type { Family, KeptInvariants, Landscape, RowSymmetry, StructureRow } from '../landscape/schema.js';
import { writtenInByKept } from '../landscape/written-in.js';
import { defaultSetting, groupSymbol } from '../geometry/space-group-table.js';
import { seededUniform } from '../demo/prng.js';
import { convergenceCurve } from '../landscape/convergence.js';

export interface SyntheticOptions {
  /** Number of kept structures. */
  kept: number;
  /** Extra structures found again (duplicates), spread over the kept ones. */
  duplicates?: number;
  rejected?: number;
  outsideWindow?: number;
  families?: number;
  /** Nearest kept neighbours stored per kept structure. */
  neighbours?: number;
  /** AMD length (PDD depth k). */
  k?: number;
  seed?: number;
  /** Leave out the convergence curve. */
  noConvergence?: boolean;
}

const SPACE_GROUPS = ['P21/c', 'P-1', 'P212121', 'C2/c', 'P21', 'Pbca', 'Pna21'];
const Z_OF: Record<string, number> = { 'P21/c': 4, 'P-1': 2, P212121: 4, 'C2/c': 8, P21: 2, Pbca: 8, Pna21: 4 };
const REASONS = [
  'the cell length _cell_length_b is missing',
  'no atom sites: the _atom_site_fract_x loop is empty',
  'symmetry operation "x,y+1/2,q" cannot be read (line 14)',
  'no energy: the energies file has no row with this id',
  'atoms overlap: O1 and O1_2 are 0.12 Å apart after applying the symmetry operations',
];

export function syntheticLandscape(opts: SyntheticOptions): Landscape {
  const rand = seededUniform(opts.seed ?? 1);
  const nKept = opts.kept;
  const nDup = opts.duplicates ?? Math.round(nKept * 1.5);
  const nRej = opts.rejected ?? Math.max(1, Math.round(nKept * 0.02));
  const nOut = opts.outsideWindow ?? Math.round(nKept * 0.05);
  const nFam = opts.families ?? Math.max(1, Math.round(Math.sqrt(nKept) / 2));
  const nbK = opts.neighbours ?? 5;
  const k = opts.k ?? 100;
  const total = nKept + nDup + nRej + nOut;

  // Families: centres in the hidden plane (Å), each with an energy offset and a density.
  const famX = new Float64Array(nFam), famY = new Float64Array(nFam);
  for (let f = 0; f < nFam; f++) {
    famX[f] = rand() * 6;
    famY[f] = rand() * 6;
  }
  // Kept structures (generation order g = 0..nKept-1).
  const px = new Float64Array(nKept), py = new Float64Array(nKept), eRel = new Float64Array(nKept), dens = new Float64Array(nKept);
  const fam = new Int32Array(nKept);
  for (let g = 0; g < nKept; g++) {
    const f = Math.floor(rand() * nFam);
    const spread = 0.35;
    px[g] = famX[f]! + gauss(rand) * spread;
    py[g] = famY[f]! + gauss(rand) * spread;
    // Energy and density vary smoothly over the plane, so that metric neighbours are also close on the
    // energy-density plot, as they are for real packings.
    eRel[g] = Math.max(0, py[g]! * 2 + Math.abs(gauss(rand)) * 0.8);
    dens[g] = 1.22 + px[g]! * 0.04 + gauss(rand) * 0.004;
    // About one structure in eight is left unassigned, as HDBSCAN leaves sparse points.
    fam[g] = rand() < 0.12 ? -1 : f;
  }
  // Make the lowest energy exactly 0.
  let eMin = Infinity;
  for (let g = 0; g < nKept; g++) eMin = Math.min(eMin, eRel[g]!);
  for (let g = 0; g < nKept; g++) eRel[g] = eRel[g]! - eMin;

  // Duplicates: owner (kept generation index) with a geometric-like spread of group sizes.
  const dupOwner = new Int32Array(nDup);
  for (let d = 0; d < nDup; d++) dupOwner[d] = Math.floor(Math.pow(rand(), 2) * nKept);

  // Input order: a shuffle of all rows. Kinds: 0 kept, 1 duplicate, 2 rejected, 3 outside window.
  const kind = new Uint8Array(total);
  const which = new Int32Array(total);
  let p = 0;
  for (let g = 0; g < nKept; g++) { kind[p] = 0; which[p++] = g; }
  for (let d = 0; d < nDup; d++) { kind[p] = 1; which[p++] = d; }
  for (let r = 0; r < nRej; r++) { kind[p] = 2; which[p++] = r; }
  for (let o = 0; o < nOut; o++) { kind[p] = 3; which[p++] = o; }
  for (let a = total - 1; a > 0; a--) {
    const b = Math.floor(rand() * (a + 1));
    const tk = kind[a]!; kind[a] = kind[b]!; kind[b] = tk;
    const tw = which[a]!; which[a] = which[b]!; which[b] = tw;
  }
  const keptAt = new Int32Array(nKept); // generation index -> structure index
  for (let i = 0; i < total; i++) if (kind[i] === 0) keptAt[which[i]!] = i;

  // Exact nearest kept neighbours in the hidden plane (brute force, typed arrays).
  const nbIdx = new Int32Array(nKept * nbK).fill(-1);
  const nbDist = new Float64Array(nKept * nbK).fill(Infinity);
  for (let a = 0; a < nKept; a++) {
    const base = a * nbK;
    for (let b = 0; b < nKept; b++) {
      if (a === b) continue;
      const dx = px[a]! - px[b]!, dy = py[a]! - py[b]!;
      const d = Math.sqrt(dx * dx + dy * dy);
      if (d >= nbDist[base + nbK - 1]!) continue;
      let s = nbK - 1;
      while (s > 0 && nbDist[base + s - 1]! > d) {
        nbDist[base + s] = nbDist[base + s - 1]!;
        nbIdx[base + s] = nbIdx[base + s - 1]!;
        s--;
      }
      nbDist[base + s] = d;
      nbIdx[base + s] = b;
    }
  }

  const members = new Int32Array(nKept).fill(1);
  for (let d = 0; d < nDup; d++) members[dupOwner[d]!] = members[dupOwner[d]!]! + 1;
  const dupDist = new Float64Array(nDup);
  for (let d = 0; d < nDup; d++) dupDist[d] = 0.0005 + rand() * 0.006;
  // Smallest distance of any duplicate to its kept structure (the kept one's nearest usable structure).
  const closestDup = new Float64Array(nKept).fill(Infinity);
  for (let d = 0; d < nDup; d++) closestDup[dupOwner[d]!] = Math.min(closestDup[dupOwner[d]!]!, dupDist[d]!);

  const sg = (g: number) => SPACE_GROUPS[g % SPACE_GROUPS.length] as string;
  /**
   * A cell that holds Z molecules of C7H6N2O (134.14 g/mol) at the given density: a and b from fixed fractions of
   * g (the random stream is left as it was), beta from 90 to 115 degrees, c from the volume (Z M / (rho N_A)).
   */
  const cellFor = (g: number, densityGPerCm3: number): StructureRow['cell'] => {
    const volume = (Z_OF[sg(g)]! * 134.14) / (densityGPerCm3 * 0.602214076);
    const a = 5 + ((g * 0.618034) % 1) * 6, b = 6 + ((g * 0.414214) % 1) * 8, beta = 90 + ((g * 0.732051) % 1) * 25;
    const c = volume / (a * b * Math.sin((beta * Math.PI) / 180));
    return { a, b, c, alpha: 90, beta, gamma: 90, volume };
  };
  const rows: StructureRow[] = [];
  for (let i = 0; i < total; i++) {
    const w = which[i]!;
    const file = `runs/search-${String(Math.floor(i / 500)).padStart(3, '0')}.cif`;
    const id = `cand-${String(i).padStart(6, '0')}`;
    const base: StructureRow = {
      index: i, id, source: `${file}#${id}`, file, block: id, line: 1 + (i % 500) * 60, status: 'kept', reason: '',
      energy: null, energyRel: null, densityGPerCm3: null, atoms: null, spaceGroup: null, symmetry: null, cell: null, z: null, zPrime: null,
      formulas: ['C7H6N2O'], composition: 'C7H6N2O', flags: [], otherChemistryIndex: null, otherChemistry: null, otherComposition: null, otherChemistryDistance: null, energyOffset: null, flatPartnerIndices: [], flatPartners: [], flatPartnerDistance: null, keptIndex: null, duplicateOf: null, distanceToKept: null, family: -1, nearestIndex: null,
      nearest: null, nearestDistance: null, nnDistance: null, members: 0, writtenIn: [], notes: [],
    };
    if (kind[i] === 0) {
      const g = w;
      const nb0 = nbIdx[g * nbK]!;
      Object.assign(base, {
        status: 'kept', energy: -95 + eRel[g]!, energyRel: eRel[g]!, densityGPerCm3: dens[g]!, atoms: 16 * Z_OF[sg(g)]!,
        spaceGroup: sg(g), symmetry: detected(sg(g), sg(g)), cell: cellFor(g, dens[g]!), z: Z_OF[sg(g)]!, zPrime: 1, keptIndex: i,
        distanceToKept: 0, family: fam[g]!,
        nearestIndex: nb0 >= 0 ? keptAt[nb0]! : null, nearestDistance: nb0 >= 0 ? nbDist[g * nbK]! : null,
        nnDistance: Math.min(closestDup[g]!, nb0 >= 0 ? nbDist[g * nbK]! : Infinity),
        members: members[g]!,
      });
      if (!Number.isFinite(base.nnDistance as number)) base.nnDistance = null;
    } else if (kind[i] === 1) {
      const g = dupOwner[w]!;
      Object.assign(base, {
        status: 'duplicate', energy: -95 + eRel[g]! + 0.002 + rand() * 0.03, densityGPerCm3: dens[g]! + gauss(rand) * 2e-4,
        // About a third of the copies were written in P1, as searches write them.
        atoms: 16 * Z_OF[sg(g)]!, spaceGroup: sg(g), symmetry: detected(sg(g), rand() < 0.3 ? 'P1' : sg(g)), z: Z_OF[sg(g)]!, zPrime: 1, keptIndex: keptAt[g]!,
        duplicateOf: `cand-${String(keptAt[g]!).padStart(6, '0')}`, distanceToKept: dupDist[w]!, family: fam[g]!,
        nnDistance: dupDist[w]!,
      });
      base.energyRel = (base.energy as number) + 95;
      base.cell = cellFor(g, base.densityGPerCm3 as number);
    } else if (kind[i] === 2) {
      Object.assign(base, { status: 'rejected', reason: REASONS[w % REASONS.length]! });
      base.formulas = [];
    } else {
      const e = 25 + rand() * 20;
      Object.assign(base, {
        status: 'outside-window', energy: -95 + e, energyRel: e, densityGPerCm3: 1.2 + rand() * 0.2, atoms: 64, spaceGroup: 'P21/c',
        symmetry: detected('P21/c', 'P21/c'), z: 4, zPrime: 1,
      });
    }
    rows.push(base);
  }
  for (const r of rows) {
    if (r.nearestIndex !== null) r.nearest = rows[r.nearestIndex]!.id;
    if (r.symmetry?.note) r.notes.push(r.symmetry.note);
  }
  for (const [k, list] of writtenInByKept(rows)) rows[k]!.writtenIn = list;
  // Kept list, lowest energy first.
  const keptGen = Array.from({ length: nKept }, (_, g) => g).sort((a, b) => eRel[a]! - eRel[b]! || keptAt[a]! - keptAt[b]!);
  const kept = keptGen.map((g) => keptAt[g]!);

  // Edges: each pair once, smaller index first.
  const seen = new Set<string>();
  const edges: Array<[number, number, number]> = [];
  for (let g = 0; g < nKept; g++) {
    for (let s = 0; s < nbK; s++) {
      const h = nbIdx[g * nbK + s]!;
      if (h < 0) continue;
      const a = Math.min(keptAt[g]!, keptAt[h]!), b = Math.max(keptAt[g]!, keptAt[h]!);
      const key = `${a},${b}`;
      if (seen.has(key)) continue;
      seen.add(key);
      edges.push([a, b, nbDist[g * nbK + s]!]);
    }
  }

  const families: Family[] = [];
  for (let f = 0; f < nFam; f++) {
    const mem = kept.filter((i) => rows[i]!.family === f);
    if (mem.length > 0) families.push({ id: f, members: mem });
  }

  const inv: KeptInvariants[] = keptGen.map((g) => {
    const amd: number[] = [];
    for (let j = 1; j <= k; j++) amd.push(3.1 * Math.cbrt(j) * (1 + 0.01 * px[g]!) + 0.02 * py[g]! * Math.sin(j / 7));
    return { index: keptAt[g]!, amd, pddWeights: [], pddRows: [] };
  });

  // Convergence: the curve and verdict sift itself would store for this input order.
  const convergence = opts.noConvergence ? null : convergenceCurve(rows, [5, 10, 20]);

  const land: Landscape = {
    format: 'polysift-landscape',
    formatVersion: 1,
    tool: { name: 'polysift', version: '0.1.0' },
    run: { createdAt: '2026-01-01T00:00:00.000Z', timingsSeconds: { read: 1.25, invariants: 10.5, neighbours: 4.75, families: 0.5 } },
    parameters: {
      k, hydrogens: 'keep', toleranceAngstrom: 0.02, symmetryToleranceAngstrom: 0.06, toleranceMode: 'given', elementCheck: true, energyMismatch: 1, flatEnergy: 0.01, flatDensityGPerCm3: 0.002, minFamilySize: 5, minSamples: 5, energyWindow: 20, energyUnit: 'kJ/mol', energyBasis: 'molecule',
      neighbours: nbK, inputs: ['runs/'], energiesFile: 'runs/energies.csv', energyItem: null,
    },
    counts: { input: total, kept: nKept, duplicate: nDup, rejected: nRej, outsideWindow: nOut },
    flagCounts: { otherChemistryPairs: 0, otherChemistry: 0, energyMismatch: 0, flatMinimumPairs: 0, flatMinimum: 0 },
    toleranceChoice: null,
    lowestEnergy: -95,
    structures: rows,
    kept,
    edges,
    families,
    embedding: {
      method: 'hidden plane of the synthetic generator (exact)',
      quality: [{ name: 'Kruskal stress-1', value: 0 }],
      coords: kept.map((i) => {
        const g = which[i]!;
        return [px[g]!, py[g]!] as [number, number];
      }),
    },
    invariants: { k, hydrogens: 'keep', kept: inv },
    convergence,
  };
  return land;
}

export interface NameOverride {
  /** Structure index. */
  at: number;
  id?: string;
  block?: string;
  file?: string;
  spaceGroup?: string;
  reason?: string;
}

/** Give chosen structures other strings (hostile ids, block and file names), keeping every reference consistent. */
export function renameStructures(land: Landscape, overrides: NameOverride[]): Landscape {
  const rows = land.structures;
  for (const o of overrides) {
    const r = rows[o.at];
    if (!r) throw new Error(`renameStructures: no structure at ${o.at}`);
    if (o.id !== undefined) r.id = o.id;
    if (o.block !== undefined) r.block = o.block;
    if (o.file !== undefined) r.file = o.file;
    if (o.spaceGroup !== undefined) r.spaceGroup = o.spaceGroup;
    if (o.reason !== undefined) r.reason = o.reason;
    r.source = `${r.file}#${r.block}`;
  }
  for (const r of rows) {
    if (r.nearestIndex !== null) r.nearest = rows[r.nearestIndex]!.id;
    if (r.status === 'duplicate' && r.keptIndex !== null) r.duplicateOf = rows[r.keptIndex]!.id;
  }
  return land;
}

/** Symmetry of a structure detected in `symbol` and written in `declared`. */
function detected(symbol: string, declared: string): RowSymmetry {
  const number = numberOf(symbol);
  const setting = defaultSetting(number);
  const z = Z_OF[symbol] ?? 1;
  return {
    source: 'detected', number, full: setting.full, hall: setting.hall, declared,
    declaredZPrime: declared === 'P1' ? z : 1, deviationAngstrom: declared === 'P1' ? 0.012 : 0,
    note: declared === symbol ? null : `written in ${declared}; ${symbol} within 0.06 Å`,
  };
}

function numberOf(symbol: string): number {
  for (let n = 1; n <= 230; n++) if (groupSymbol(n) === symbol) return n;
  throw new Error(`no space group spelled ${symbol}`);
}

/** A normal deviate by Box–Muller (common practice) from the seeded uniform stream. */
function gauss(rand: () => number): number {
  const u = Math.max(1e-12, rand());
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}
