// `polysift inspect <files...>`: what polysift reads from each structure (cell, symmetry, atoms,
// density, Z, Z', molecule formulas, notes) and every block it could not use, with the reason.
// The per-structure JSON object is built in one place, `inspectEntryJson`, so that further fields
// (invariants) are added there.
import type { Command } from 'commander';
import type { CellParams, CrystalFacts, CrystalRecord, OpsOrigin, PeriodicPointSet, RejectedBlock } from '../types.js';
import type { HydrogenPolicy } from '../landscape/schema.js';
import { readStructures } from '../io/read.js';
import { crystalFacts } from '../geometry/facts.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { pdd } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import { settingLabel } from '../geometry/space-group-table.js';

/** Default hydrogen handling: kept, as in `sift` (predicted structures place hydrogens reliably); drop them for X-ray structures. */
export const DEFAULT_HYDROGENS: HydrogenPolicy = 'keep';

export interface InspectOptions {
  hydrogens: HydrogenPolicy;
  energyItem?: string | null;
  /** PDD depth; when set, each entry carries its PDD and AMD (the --json output). */
  k?: number;
}

/** Default PDD depth for `inspect --json` (the project-wide default k). */
export const DEFAULT_INSPECT_K = 100;

/** One structure as `inspect --json` reports it. */
export interface InspectEntry {
  id: string;
  source: string;
  line: number;
  cell: CellParams;
  volumeA3: number;
  spaceGroup: string | null;
  operations: number;
  operationsFrom: OpsOrigin;
  /** The space-group table entry the operations were built from (symbol- or number-built records), else null. */
  tableEntry: { number: number; hm: string; ext: string; hall: string; label: string } | null;
  atomsPerCell: number;
  densityGPerCm3: number;
  /** Density counting the hydrogens of `_atom_site_attached_hydrogens` (only when such hydrogens have no sites). */
  densityWithAttachedHydrogensGPerCm3?: number;
  /** Those hydrogens per cell. */
  attachedHydrogensPerCell?: number;
  z: number;
  zPrime: number | null;
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
): InspectEntry {
  return {
    id: record.id,
    source: record.source,
    line: record.line,
    cell: { ...record.cell },
    volumeA3: facts.volumeA3,
    spaceGroup: record.spaceGroup,
    operations: record.ops.length,
    operationsFrom: record.opsOrigin,
    tableEntry: record.setting === undefined ? null : {
      number: record.setting.number, hm: record.setting.hm, ext: record.setting.ext, hall: record.setting.hall, label: settingLabel(record.setting),
    },
    atomsPerCell: facts.atomsPerCell,
    densityGPerCm3: facts.densityGPerCm3,
    ...(facts.implicitHydrogens === undefined ? {} : {
      densityWithAttachedHydrogensGPerCm3: facts.implicitHydrogens.densityGPerCm3,
      attachedHydrogensPerCell: facts.implicitHydrogens.perCell,
    }),
    z: facts.z,
    zPrime: facts.zPrime,
    formulas: facts.formulas,
    energy: record.energy,
    hydrogens: opts.hydrogens,
    setPoints: set.atomicNumbers.length,
    asymmetricUnitPoints: set.asym.length,
    notes: uniqueNotes([...record.notes, ...facts.notes, ...setNotes]),
    ...(opts.k === undefined ? {} : invariantsJson(set, opts.k)),
  };
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
    const facts = crystalFacts(record);
    return { entry: inspectEntryJson(record, facts, set, notes, opts) };
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
  lines.push(`  space group   ${s.spaceGroup ?? '(not stated)'}; ${s.operations} operation(s) ${describeOrigin(s.operationsFrom)}`);
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
  lines.push(`  Z             ${s.z}${s.zPrime === null ? '' : `   Z' ${Math.round(s.zPrime * 1000) / 1000}`}`);
  lines.push(`  molecules     ${s.formulas.join(', ')}`);
  if (s.energy !== null) lines.push(`  energy        ${s.energy}`);
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
  const k = Number(value);
  if (!/^\s*\d+\s*$/.test(value) || !Number.isInteger(k) || k < 1) throw new Error(`-k must be a whole number of neighbours, at least 1, not '${value}'`);
  return k;
}

export function parseHydrogens(value: string): HydrogenPolicy {
  if (value === 'keep' || value === 'drop') return value;
  throw new Error(`--hydrogens must be keep or drop, not '${value}'`);
}

export function registerInspect(program: Command): void {
  program
    .command('inspect')
    .description('show what polysift reads from each structure: cell, symmetry, atoms, density, Z, Z\', molecules, notes')
    .argument('<inputs...>', 'CIF files (.cif, .cif.gz, multi-block) or folders searched for them')
    .option('--json', 'print one JSON document instead of text')
    .option('--hydrogens <keep|drop>', 'keep or drop hydrogen (and deuterium) atoms in the periodic set', DEFAULT_HYDROGENS)
    .option('--energy-item <name>', 'CIF data item that holds each structure\'s energy')
    .option('-k <n>', 'PDD depth (neighbours per row) for the PDD and AMD in the --json output', String(DEFAULT_INSPECT_K))
    .action(async (inputs: string[], o: { json?: boolean; hydrogens: string; energyItem?: string; k: string }) => {
      const opts: InspectOptions = { hydrogens: parseHydrogens(o.hydrogens), energyItem: o.energyItem ?? null };
      if (o.json) opts.k = parseDepth(o.k);
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

function describeOrigin(o: OpsOrigin): string {
  return o === 'listed' ? 'listed in the file' : o === 'symbol' ? 'built from the space-group symbol' : '(none given: P1 assumed)';
}

function fmt(v: number, digits: number): string {
  return v.toFixed(digits);
}

function uniqueNotes(notes: string[]): string[] {
  return [...new Set(notes)];
}
