// The contract of `landscape.json`, written by `sift` and read by the report, `diff` and `locate`.
// Everything here is plain JSON data. Structure indices are positions in `structures` (input order).

export type Status = 'kept' | 'duplicate' | 'rejected' | 'outside-window';

export type EnergyUnit = 'kJ/mol' | 'kcal/mol' | 'eV';

export type HydrogenPolicy = 'keep' | 'drop';

/** What the energies given to sift were per: a molecule, or a cell (divided by each structure's Z when read). */
export type EnergyBasis = 'molecule' | 'cell';

export interface SiftParameters {
  /** PDD depth (neighbours per row). */
  k: number;
  hydrogens: HydrogenPolicy;
  /** Duplicate tolerance: EMD in Å to the kept structure of a group. */
  toleranceAngstrom: number;
  /** Symmetry tolerance: distance in Å within which atoms must map onto atoms for an operation to count. */
  symmetryToleranceAngstrom: number;
  /** 'given' (a number, or the default) or 'auto' (chosen from the run's own gap; `Landscape.toleranceChoice`). */
  toleranceMode: 'given' | 'auto';
  /**
   * Whether two structures of one composition must also agree within the tolerance under the element-aware EMD
   * (rows labelled by the element of their centre atom) to be duplicates.
   */
  elementCheck: boolean;
  /** Duplicates whose energy lies further than this from their group's median are flagged (in `energyUnit`). */
  energyMismatch: number;
  /** Kept pairs just beyond the tolerance within this energy and density of each other are flagged as one flat minimum. */
  flatEnergy: number;
  flatDensityGPerCm3: number;
  /** HDBSCAN minimum family size. */
  minFamilySize: number;
  /** HDBSCAN minimum samples (core distance neighbour count). */
  minSamples: number;
  /** Energy window above the lowest energy, in `energyUnit`; null for no window. */
  energyWindow: number | null;
  /** Unit of every energy in this file; every energy here is per molecule (after dividing per-cell energies by Z). */
  energyUnit: EnergyUnit;
  /** What the energies given were per; 'cell' energies were divided by each structure's Z (a note on each row says which Z). */
  energyBasis: EnergyBasis;
  /** Number of nearest kept neighbours stored per kept structure in `edges`. */
  neighbours: number;
  /** The inputs as given on the command line. */
  inputs: string[];
  /** The energies CSV, if any, and the CIF data item, if any. */
  energiesFile: string | null;
  energyItem: string | null;
}

export interface StructureRow {
  /** Position in input order, 0-based; the key used everywhere in this file. */
  index: number;
  id: string;
  /** `file#block`. */
  source: string;
  file: string;
  block: string;
  /** 1-based line of the block's `data_` line. */
  line: number;
  status: Status;
  /** Why a structure was rejected; for usable ones, an energy problem such as "no energy: ..." (empty otherwise). */
  reason: string;
  /** Energy in `parameters.energyUnit`, null when none was given. */
  energy: number | null;
  /** Energy above the lowest energy among usable structures. */
  energyRel: number | null;
  densityGPerCm3: number | null;
  /** Atoms per cell used for the invariants (after the hydrogen policy). */
  atoms: number | null;
  /**
   * The space group the structure has, one short spelling ('P21/c', 'P-1'): detected within the symmetry tolerance,
   * or the declared one where detection cannot be trusted (`symmetry.source` says which). For a rejected block, the
   * symbol its file gives, as written.
   */
  spaceGroup: string | null;
  /** Details of `spaceGroup` and what the file declares (null for rejected blocks). */
  symmetry: RowSymmetry | null;
  /** Cell as read: lengths in Å, angles in degrees, volume in Å³ (null when the angles span no cell). */
  cell: { a: number; b: number; c: number; alpha: number; beta: number; gamma: number; volume: number | null } | null;
  /** Molecules per conventional cell and per asymmetric unit of `spaceGroup`. */
  z: number | null;
  zPrime: number | null;
  formulas: string[];
  /**
   * Reduced formula (Hill order) of the compared points, after the hydrogen policy (src/geometry/composition.ts);
   * structures of different composition are never duplicates. Null for structures that were never built.
   */
  composition: string | null;
  /** Structure index of the kept structure of its group (itself for kept ones, null for rejected/outside-window). */
  keptIndex: number | null;
  /** Id of the kept structure it was collapsed into (duplicates only). */
  duplicateOf: string | null;
  /** EMD in Å to the kept structure of its group (0 for kept ones). */
  distanceToKept: number | null;
  /** HDBSCAN family of its kept structure, -1 when unassigned or not applicable. */
  family: number;
  /** Nearest other kept structure (index and id) and its EMD in Å. */
  nearestIndex: number | null;
  nearest: string | null;
  nearestDistance: number | null;
  /** EMD in Å to the nearest other usable structure of any status (kept or duplicate): the noise-versus-distinct distribution. */
  nnDistance: number | null;
  /** Group size (itself included) for kept structures, 0 otherwise. */
  members: number;
  /** Kept structures: the declared space groups the members of the group were written in, with counts, most first; [] otherwise. */
  writtenIn: Array<{ spaceGroup: string; count: number }>;
  /** Reader and energy notes a user should see (disorder policy applied, hydrogens dropped, no energy, ...). */
  notes: string[];
  /** Short codes of what deserves a look (FLAG_CODES in src/landscape/flags.ts; meanings in the README). */
  flags: string[];
  /**
   * The nearest other structure within the duplicate tolerance whose chemistry differs (another composition, or
   * the same composition with atoms of other elements at the same places), its composition and EMD (Å); null
   * when there is none. Identical geometry with other chemistry is a data or atom-assignment problem.
   */
  otherChemistryIndex: number | null;
  otherChemistry: string | null;
  otherComposition: string | null;
  otherChemistryDistance: number | null;
  /** Energy minus its duplicate group's median energy (the lower middle value for even sizes), in `energyUnit`. */
  energyOffset: number | null;
  /**
   * Kept structures that look like the same minimum on a flat energy surface: just beyond the tolerance,
   * with energy and density far closer than distinct minima (structure indices and ids, nearest first, and the
   * EMD in Å to the nearest of them). Empty for others.
   */
  flatPartnerIndices: number[];
  flatPartners: string[];
  flatPartnerDistance: number | null;
}

export interface RowSymmetry {
  /** 'detected': found in the atoms within the symmetry tolerance; 'declared': the file's own group (see `note`). */
  source: 'detected' | 'declared';
  /** International Tables number, full Hermann–Mauguin and Hall symbols of the default setting (null when unknown). */
  number: number | null;
  full: string | null;
  hall: string | null;
  /** The group the file declares, one spelling per setting ('P1', 'P21/n'), and Z' by its operations. */
  declared: string | null;
  declaredZPrime: number | null;
  /** Largest distance (Å) between an atom's image and its partner under the detected group. */
  deviationAngstrom: number | null;
  /** "written in P1; P21/c within 0.06 Å", or why the declared group is reported; null when nothing differs. */
  note: string | null;
}

export interface Family {
  id: number;
  /** Structure indices of the kept structures in the family, lowest energy first. */
  members: number[];
}

export interface Embedding {
  /** Name of the method, e.g. "classical MDS + stress majorisation (SMACOF)". */
  method: string;
  /** Quality measure name ("Kruskal stress-1", "trustworthiness@10", ...) and value. */
  quality: Array<{ name: string; value: number }>;
  /** One [x, y] per entry of `Landscape.kept`, in that order, in Å. */
  coords: Array<[number, number]>;
}

export interface KeptInvariants {
  /** Structure index of the kept structure. */
  index: number;
  amd: number[];
  /** PDD weights (n) and rows (n*k, row-major). */
  pddWeights: number[];
  pddRows: number[];
}

export interface ConvergenceCurve {
  /** Windows above the lowest energy, in `parameters.energyUnit`. */
  windows: number[];
  /** After `processed` candidates in input order: distinct kept structures found within each window. */
  points: Array<{ processed: number; counts: number[] }>;
  /** A plain sentence on whether the low-energy part is still growing, with the numbers behind the verdict. */
  statement: string;
  /** verdict === 'growing'. */
  stillGrowing: boolean;
  /** The verdict of the rule in src/landscape/convergence.ts (README: "Convergence"). */
  verdict: ConvergenceVerdict;
  /** The numbers the verdict is drawn from: the last `fraction` of candidates and the lowest window. */
  tail: {
    fraction: number;
    candidates: number;
    /** Distinct structures within the lowest window, and those first met in the tail. */
    withinLowest: number;
    newWithinLowest: number;
    /** Candidate number (1-based) at which the lowest-energy structure was first met. */
    lowestFirstFoundAt: number | null;
  };
}

/** Whether a search still finds new low-energy structures near its end. */
export type ConvergenceVerdict = 'growing' | 'slowing' | 'levelled-off';

/** How many rows carry each flag, and how many pairs stand behind the pair flags (src/landscape/flags.ts). */
export interface FlagCounts {
  /** Pairs within the tolerance with different chemistry, and rows flagged for it. */
  otherChemistryPairs: number;
  otherChemistry: number;
  /** Members of duplicate groups far from their group's median energy. */
  energyMismatch: number;
  /** Pairs of kept structures that look like one flat minimum, and kept structures flagged for it. */
  flatMinimumPairs: number;
  flatMinimum: number;
}

/** How `--tolerance auto` chose the tolerance from the run's own distances (src/landscape/auto-tolerance.ts). */
export interface ToleranceChoice {
  /** The tolerance used (Å): inside the gap, or the fixed default when no clear gap was found. */
  chosenAngstrom: number;
  /** The gap: the longest edge below it and the shortest above it (Å); null when no gap was found. */
  gapLowAngstrom: number | null;
  gapHighAngstrom: number | null;
  /** Width of the gap in decades, log10(high / low). */
  gapDecades: number | null;
  /** True when no distance lies above the noise within the search radius: the gap reaches at least that far. */
  gapOpen: boolean;
  /** The closest two kept structures turned out to be this far apart (Å), after the collapse; null with fewer than two. */
  closestKeptAngstrom: number | null;
  /** Whether the gap is wide enough to trust; when not, `warning` says why and the default is used. */
  clear: boolean;
  warning: string | null;
  /** Pairs were searched within this EMD (Å); edges beyond it are not known. */
  searchRadiusAngstrom: number;
  /**
   * The distribution searched: lengths (Å, ascending) of the single-linkage (minimum spanning forest) edges
   * within the search radius, among structures of one composition: within a group each structure's nearest
   * neighbour, between groups each group's nearest other group.
   */
  edgeLengthsAngstrom: number[];
}

export interface Landscape {
  format: 'polysift-landscape';
  formatVersion: 1;
  tool: { name: 'polysift'; version: string };
  /** The only field that differs between two runs on the same inputs and options. */
  run: { createdAt: string; timingsSeconds: Record<string, number> };
  parameters: SiftParameters;
  counts: { input: number; kept: number; duplicate: number; rejected: number; outsideWindow: number };
  /** Flags of the run (rows carry the codes); absent in landscapes written before flags, read as zeros. */
  flagCounts: FlagCounts;
  /** How the duplicate tolerance was chosen with `auto`; null when it was given (or the default). */
  toleranceChoice: ToleranceChoice | null;
  /** Lowest energy among usable structures (null without energies). */
  lowestEnergy: number | null;
  structures: StructureRow[];
  /** Structure indices of kept structures, lowest energy first (input order without energies). */
  kept: number[];
  /** Nearest-neighbour edges among kept structures: [index, index, EMD Å], each pair once, smaller index first. */
  edges: Array<[number, number, number]>;
  families: Family[];
  embedding: Embedding | null;
  invariants: { k: number; hydrogens: HydrogenPolicy; kept: KeptInvariants[] };
  convergence: ConvergenceCurve | null;
}
