// `polysift inspect <files...>`: what polysift reads from each structure (cell, symmetry, atoms,
// density, Z, Z', molecule formulas, notes) and every block it could not use, with the reason.
// The per-structure JSON object is built in one place, `inspectEntryJson`, so that further fields
// (invariants) are added there.
import type { Command } from 'commander';
import type { CellParams, CrystalFacts, CrystalRecord, CrystalSymmetry, OpsOrigin, PeriodicPointSet, RejectedBlock } from '../types.js';
import type { HydrogenPolicy } from '../landscape/schema.js';
import { readStructures } from '../io/read.js';
import { crystalFactsAndSymmetry } from '../geometry/facts.js';
import { cellOf, DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM, type DetectedSymmetry, type SymmetryDetection } from '../geometry/detect-symmetry.js';
import { formatOpXyz } from '../geometry/symmetry.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { pdd } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import { settingLabel } from '../geometry/space-group-table.js';
import { addHydrogens, addPddDepth, addSymmetryTolerance, parseHydrogens, parseSymmetryTolerance, parseWhole } from './options.js';

/** Default hydrogen handling: kept, as in `sift` (predicted structures place hydrogens reliably); drop them for X-ray structures. */
export const DEFAULT_HYDROGENS: HydrogenPolicy = 'keep';

export interface InspectOptions {
  hydrogens: HydrogenPolicy;
  /** Tolerance (Å) of symmetry detection; default DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM. */
  symmetryToleranceAngstrom?: number;
  energyItem?: string | null;
  /** PDD depth; when set, each entry carries its PDD and AMD (the --json output). */
  k?: number;
}


/** One structure as `inspect --json` reports it. */
export interface InspectEntry {
  id: string;
  source: string;
  line: number;
  cell: CellParams;
  volumeA3: number;
  /** The space group the crystal has: detected, or the declared one when detection cannot be trusted (see `symmetry.note`). */
  spaceGroup: string | null;
  /** The symbol the file gives, as written. */
  spaceGroupAsWritten: string | null;
  /** Operations the file gives (or builds from its symbol). */
  operations: number;
  operationsFrom: OpsOrigin;
  symmetry: CrystalSymmetry;
  /** The detected group in full, when detection ran and succeeded. */
  detected: DetectedJson | null;
  /** The space-group table entry the declared operations were built from (symbol- or number-built records), else null. */
  tableEntry: { number: number; hm: string; ext: string; hall: string; label: string } | null;
  atomsPerCell: number;
  densityGPerCm3: number;
  /** Density counting the hydrogens of `_atom_site_attached_hydrogens` (only when such hydrogens have no sites). */
  densityWithAttachedHydrogensGPerCm3?: number;
  /** Those hydrogens per cell. */
  attachedHydrogensPerCell?: number;
  /** Molecules per conventional cell and per asymmetric unit of the reported group. */
  z: number | null;
  zPrime: number | null;
  /** Molecules in the given cell. */
  moleculesPerCell: number;
  formulas: string[];
  energy: number | null;
  hydrogens: HydrogenPolicy;
  /** Points of the periodic set after the hydrogen option (what invariants are computed on). */
  setPoints: number;
  /** Symmetry orbits among those points (points of the asymmetric unit). */
  asymmetricUnitPoints: number;
  notes: string[];
  /** PDD of the periodic set: k, weights (adding up to 1) and rows of k ascending distances in Å (when `k` is asked for). */
  pdd?: { k: number; weights: number[]; rows: number[][] };
  /** AMD vector in Å (k values), when `k` is asked for. */
  amd?: number[];
}

/** The detected space group with its operations and cells, as `inspect --json` reports it. */
export type DetectedJson = Pick<
  DetectedSymmetry,
  'number' | 'symbol' | 'hm' | 'full' | 'hall' | 'pointGroup' | 'crystalSystem' | 'toleranceAngstrom' | 'deviationAngstrom' |
  'latticePointsPerCell' | 'primitiveAtoms' | 'originShift'
> & {
  /** Operations in the given cell, x,y,z form. */
  operations: string[];
  primitiveCell: CellParams;
  conventionalCell: CellParams;
  /** x_standard = transformation x_given + originShift (fractional columns; rows of the 3x3 matrix). */
  transformation: number[][];
};

export interface InspectRejected {
  id: string;
  source: string;
  line: number;
  reason: string;
}

export interface InspectReport {
  structures: InspectEntry[];
  rejected: InspectRejected[];
}

/** The JSON object for one structure; the single place to extend the `--json` output. */
export function inspectEntryJson(
  record: CrystalRecord, facts: CrystalFacts, set: PeriodicPointSet, setNotes: string[], opts: InspectOptions,
  detection: SymmetryDetection | null = null,
): InspectEntry {
  const sym = facts.symmetry;
  return {
    id: record.id,
    source: record.source,
    line: record.line,
    cell: { ...record.cell },
    volumeA3: facts.volumeA3,
    spaceGroup: sym.symbol,
    spaceGroupAsWritten: record.spaceGroup,
    operations: record.ops.length,
    operationsFrom: record.opsOrigin,
    symmetry: sym,
    detected: detection !== null && detection.ok && sym.source === 'detected' ? detectedJson(detection.symmetry) : null,
    tableEntry: record.setting === undefined ? null : {
      number: record.setting.number, hm: record.setting.hm, ext: record.setting.ext, hall: record.setting.hall, label: settingLabel(record.setting),
    },
    atomsPerCell: facts.atomsPerCell,
    densityGPerCm3: facts.densityGPerCm3,
    ...(facts.implicitHydrogens === undefined ? {} : {
      densityWithAttachedHydrogensGPerCm3: facts.implicitHydrogens.densityGPerCm3,
      attachedHydrogensPerCell: facts.implicitHydrogens.perCell,
    }),
    z: sym.z,
    zPrime: sym.zPrime,
    moleculesPerCell: facts.z,
    formulas: facts.formulas,
    energy: record.energy,
    hydrogens: opts.hydrogens,
    setPoints: set.atomicNumbers.length,
    asymmetricUnitPoints: set.asym.length,
    notes: uniqueNotes([...record.notes, ...facts.notes, ...setNotes]),
    ...(opts.k === undefined ? {} : invariantsJson(set, opts.k)),
  };
}

function detectedJson(d: DetectedSymmetry): DetectedJson {
  const t = d.transformation;
  const r6 = (v: number) => Math.round(v * 1e6) / 1e6 + 0;
  return {
    number: d.number, symbol: d.symbol, hm: d.hm, full: d.full, hall: d.hall, pointGroup: d.pointGroup, crystalSystem: d.crystalSystem,
    toleranceAngstrom: d.toleranceAngstrom, deviationAngstrom: r6(d.deviationAngstrom),
    operations: d.operations.map(formatOpXyz), latticePointsPerCell: d.latticePointsPerCell,
    primitiveCell: roundCell(cellOf(d.primitiveBasis)), primitiveAtoms: d.primitiveAtoms,
    conventionalCell: roundCell(cellOf(d.conventionalBasis)),
    transformation: [0, 1, 2].map((r) => [t[3 * r], t[3 * r + 1], t[3 * r + 2]].map(r6)),
    originShift: [r6(d.originShift[0]), r6(d.originShift[1]), r6(d.originShift[2])],
  };
}

function roundCell(c: CellParams): CellParams {
  const r = (v: number) => Math.round(v * 1e4) / 1e4;
  return { a: r(c.a), b: r(c.b), c: r(c.c), alpha: r(c.alpha), beta: r(c.beta), gamma: r(c.gamma) };
}

/** PDD and AMD of a set as plain JSON arrays (src/invariants/pdd.ts, amd.ts). */
function invariantsJson(set: PeriodicPointSet, k: number): { pdd: { k: number; weights: number[]; rows: number[][] }; amd: number[] } {
  const p = pdd(set, k);
  const rows: number[][] = [];
  for (let i = 0; i < p.weights.length; i++) rows.push(Array.from(p.rows.subarray(i * k, (i + 1) * k)));
  return { pdd: { k, weights: Array.from(p.weights), rows }, amd: Array.from(amd(p)) };
}

/** Inspect one record; a structure that cannot be used becomes a rejection with the reason. */
export function inspectRecord(record: CrystalRecord, opts: InspectOptions): { entry: InspectEntry } | { rejected: InspectRejected } {
  try {
    const { set, notes } = toPeriodicSet(record, { hydrogens: opts.hydrogens });
    const { facts, detection } = crystalFactsAndSymmetry(record, { symmetryToleranceAngstrom: opts.symmetryToleranceAngstrom });
    return { entry: inspectEntryJson(record, facts, set, notes, opts, detection) };
  } catch (e) {
    const message = (e as Error).message;
    const reason = message.startsWith(record.source) ? message.slice(record.source.length).replace(/^:\s*/, '') : message;
    return { rejected: { id: record.id, source: record.source, line: record.line, reason } };
  }
}

/**
 * Read every input and inspect every block. `onItem`, when given, sees each structure or rejection as
 * soon as it is ready (the text output streams through it, so a large multi-block file prints as it goes).
 */
export async function inspectInputs(
  paths: string[], opts: InspectOptions, onItem?: (item: { entry: InspectEntry } | { rejected: InspectRejected }) => void,
): Promise<InspectReport> {
  const report: InspectReport = { structures: [], rejected: [] };
  for await (const r of readStructures(paths, { energyItem: opts.energyItem ?? null })) {
    const out = r.kind === 'rejected' ? { rejected: rejectedFromBlock(r.rejected) } : inspectRecord(r.record, opts);
    if ('entry' in out) report.structures.push(out.entry);
    else report.rejected.push(out.rejected);
    onItem?.(out);
  }
  return report;
}

/** Human-readable form of one structure. */
export function formatEntryText(s: InspectEntry): string {
  const c = s.cell;
  const lines: string[] = [];
  lines.push(`${s.id}  (${s.source}, line ${s.line})`);
  lines.push(`  cell          a ${fmt(c.a, 4)}  b ${fmt(c.b, 4)}  c ${fmt(c.c, 4)} Å   alpha ${fmt(c.alpha, 3)}  beta ${fmt(c.beta, 3)}  gamma ${fmt(c.gamma, 3)}°`);
  lines.push(`  volume        ${fmt(s.volumeA3, 2)} Å³`);
  lines.push(`  space group   ${describeSymmetry(s)}`);
  if (s.detected !== null) {
    const d = s.detected;
    lines.push(`                No. ${d.number}, ${d.full} (Hall ${d.hall}), point group ${d.pointGroup}, ${d.crystalSystem}; ${d.operations.length} operation(s) in this cell`);
    lines.push(`  cells         conventional ${formatCell(d.conventionalCell)}; primitive ${formatCell(d.primitiveCell)}, ${d.primitiveAtoms} atoms`);
  }
  lines.push(`  declared      ${s.spaceGroupAsWritten ?? '(not stated)'}${s.symmetry.declared !== null && s.symmetry.declared !== s.spaceGroupAsWritten ? ` (${s.symmetry.declared})` : ''}; ${s.operations} operation(s) ${describeOrigin(s.operationsFrom)}`);
  if (s.tableEntry !== null) {
    const t = s.tableEntry;
    lines.push(`  table entry   group ${t.number}, ${t.label}${t.ext === '' || t.label.endsWith(`:${t.ext}`) ? '' : ` (setting ${t.ext})`}, Hall ${t.hall}`);
  }
  lines.push(`  atoms/cell    ${s.atomsPerCell} (hydrogens included); periodic set ${s.setPoints} points, ${s.asymmetricUnitPoints} in the asymmetric unit (hydrogens ${s.hydrogens === 'keep' ? 'kept' : 'dropped'})`);
  lines.push(
    `  density       ${fmt(s.densityGPerCm3, 4)} g/cm³` +
      (s.densityWithAttachedHydrogensGPerCm3 === undefined
        ? ''
        : `; ${fmt(s.densityWithAttachedHydrogensGPerCm3, 4)} g/cm³ with the ${Math.round(s.attachedHydrogensPerCell! * 1000) / 1000} hydrogens per cell of _atom_site_attached_hydrogens (no sites; not in the comparison)`),
  );
  lines.push(
    `  Z             ${s.z ?? '–'}   Z' ${s.zPrime === null ? '–' : Math.round(s.zPrime * 1000) / 1000}   (${s.moleculesPerCell} molecule(s) in this cell` +
      `${s.symmetry.declaredZPrime === null || s.zPrime === null || Math.abs(s.symmetry.declaredZPrime - s.zPrime) < 1e-6 ? '' : `; Z' ${Math.round(s.symmetry.declaredZPrime * 1000) / 1000} by the declared operations`})`,
  );
  lines.push(`  molecules     ${s.formulas.join(', ')}`);
  if (s.energy !== null) lines.push(`  energy        ${s.energy}`);
  if (s.symmetry.note !== null) lines.push(`  note: ${s.symmetry.note}`);
  for (const n of s.notes) lines.push(`  note: ${n}`);
  return `${lines.join('\n')}\n\n`;
}

/** Human-readable form of one rejected block. */
export function formatRejectedText(r: InspectRejected): string {
  return `rejected: ${r.source}, line ${r.line}: ${r.reason}\n\n`;
}

/** Human-readable form of a whole report (structures, then rejections, then counts). */
export function formatInspectText(report: InspectReport): string {
  return (
    report.structures.map(formatEntryText).join('') + report.rejected.map(formatRejectedText).join('') + formatSummary(report)
  );
}

function formatSummary(report: InspectReport): string {
  return `${report.structures.length} structure(s) read, ${report.rejected.length} rejected\n`;
}

/** The -k value: a whole number of neighbours, at least 1. */
export function parseDepth(value: string): number {
  return parseWhole(value, '-k', 1);
}

export { parseHydrogens, parseSymmetryTolerance };

export function registerInspect(program: Command): void {
  const cmd = program
    .command('inspect')
    .description('show what polysift reads from each structure: cell, symmetry, atoms, density, Z, Z\', molecules, notes')
    .argument('<inputs...>', 'CIF files (.cif, .cif.gz, multi-block) or folders searched for them')
    .option('--energy-item <name>', 'CIF data item holding each structure\'s energy');
  addPddDepth(cmd, 'neighbours per PDD row (k) for the PDD and AMD in the --json output');
  addHydrogens(cmd, DEFAULT_HYDROGENS);
  addSymmetryTolerance(cmd);
  cmd.option('--json', 'print the result as JSON on stdout');
  cmd.action(async (inputs: string[], o: { json?: boolean; hydrogens: string; energyItem?: string; pddDepth: string; symmetryTolerance: string }) => {
    const opts: InspectOptions = {
      hydrogens: parseHydrogens(o.hydrogens), energyItem: o.energyItem ?? null, symmetryToleranceAngstrom: parseSymmetryTolerance(o.symmetryTolerance),
    };
    if (o.json) opts.k = parseDepth(o.pddDepth);
    let report: InspectReport;
    if (o.json) {
      report = await inspectInputs(inputs, opts);
      process.stdout.write(`${JSON.stringify(report, null, 2)}\n`);
    } else {
      report = await inspectInputs(inputs, opts, (item) => {
        process.stdout.write('entry' in item ? formatEntryText(item.entry) : formatRejectedText(item.rejected));
      });
      process.stdout.write(formatSummary(report));
    }
    if (report.structures.length === 0) {
      throw new Error(`no structure could be used from ${inputs.join(', ')} (${report.rejected.length} block(s) rejected, reasons above)`);
    }
  });
}

// ---- helpers ----

function rejectedFromBlock(b: RejectedBlock): InspectRejected {
  return { id: b.id, source: b.source, line: b.line, reason: b.reason };
}

function describeSymmetry(s: InspectEntry): string {
  const sym = s.symmetry;
  if (sym.source === 'detected') {
    return `${sym.symbol} (detected within ${sym.toleranceAngstrom} Å; largest deviation ${(sym.deviationAngstrom ?? 0).toFixed(3)} Å)`;
  }
  return `${sym.symbol ?? '(not stated)'} (as declared; not detected)`;
}

function formatCell(c: CellParams): string {
  return `${fmt(c.a, 4)} ${fmt(c.b, 4)} ${fmt(c.c, 4)} Å ${fmt(c.alpha, 2)} ${fmt(c.beta, 2)} ${fmt(c.gamma, 2)}°`;
}

function describeOrigin(o: OpsOrigin): string {
  return o === 'listed' ? 'listed in the file' : o === 'symbol' ? 'built from the space-group symbol' : '(none given: P1 assumed)';
}

function fmt(v: number, digits: number): string {
  return v.toFixed(digits);
}

function uniqueNotes(notes: string[]): string[] {
  return [...new Set(notes)];
}
