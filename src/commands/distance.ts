// `polysift distance <a> <b> [more...]`: the EMD between PDDs (Rubner, Tomasi & Guibas, IJCV 2000; PDD from
// "Resolving the data ambiguity for periodic crystals", NeurIPS 2022) and the AMD distance, its lower bound
// ("Average minimum distances of periodic point sets", MATCH 2022), in Å, for two structures; for more, both matrices.
// Every block of every input is one structure; blocks that cannot be used are listed with the reason.
import type { Command } from 'commander';
import type { HydrogenPolicy } from '../landscape/schema.js';
import type { Pdd } from '../types.js';
import { readStructures } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { pdd } from '../invariants/pdd.js';
import { amd } from '../invariants/amd.js';
import { amdDistance } from '../metric/emd.js';
import { distanceMatrix } from '../metric/graph.js';
import { DEFAULT_HYDROGENS, parseDepth } from './inspect.js';
import { addHydrogens, addPddDepth, addThreads, parseHydrogens, parseThreads } from './options.js';


export interface DistanceOptions {
  k: number;
  hydrogens: HydrogenPolicy;
  /** Worker threads for the EMD matrix (default: available cores). */
  threads?: number;
}

export interface DistanceReport {
  k: number;
  hydrogens: HydrogenPolicy;
  structures: Array<{ id: string; source: string; line: number }>;
  /** EMD in Å, n x n, symmetric, zero diagonal. */
  emdAngstrom: number[][];
  /** AMD distance (L-infinity between AMD vectors) in Å, n x n; never above the EMD. */
  amdDistanceAngstrom: number[][];
  rejected: Array<{ id: string; source: string; line: number; reason: string }>;
}

/** Read every structure of the inputs and compare all of them. Throws when fewer than two can be used. */
export async function distanceReport(paths: string[], opts: DistanceOptions): Promise<DistanceReport> {
  const structures: DistanceReport['structures'] = [];
  const rejected: DistanceReport['rejected'] = [];
  const items: Array<{ pdd: Pdd; amd: Float64Array }> = [];
  for await (const r of readStructures(paths)) {
    if (r.kind === 'rejected') {
      const b = r.rejected;
      rejected.push({ id: b.id, source: b.source, line: b.line, reason: b.reason });
      continue;
    }
    const rec = r.record;
    try {
      const { set } = toPeriodicSet(rec, { hydrogens: opts.hydrogens });
      const p = pdd(set, opts.k);
      items.push({ pdd: p, amd: amd(p) });
      structures.push({ id: rec.id, source: rec.source, line: rec.line });
    } catch (e) {
      const message = (e as Error).message;
      const reason = message.startsWith(rec.source) ? message.slice(rec.source.length).replace(/^:\s*/, '') : message;
      rejected.push({ id: rec.id, source: rec.source, line: rec.line, reason });
    }
  }
  if (items.length < 2) {
    const why = rejected.length > 0 ? `; rejected: ${rejected.map((x) => `${x.source} (line ${x.line}): ${x.reason}`).join('; ')}` : '';
    throw new Error(`distance needs at least two usable structures, found ${items.length} in ${paths.join(', ')}${why}`);
  }
  const n = items.length;
  const flat = await distanceMatrix(items, { threads: opts.threads });
  const emdAngstrom: number[][] = [];
  const amdDistanceAngstrom: number[][] = [];
  for (let i = 0; i < n; i++) {
    emdAngstrom.push(Array.from(flat.subarray(i * n, (i + 1) * n)));
    amdDistanceAngstrom.push(items.map((other) => amdDistance(items[i].amd, other.amd)));
  }
  return { k: opts.k, hydrogens: opts.hydrogens, structures, emdAngstrom, amdDistanceAngstrom, rejected };
}

/** Text form: two labelled distances for a pair, two matrices for more. */
export function formatDistanceText(r: DistanceReport): string {
  const lines: string[] = [];
  const n = r.structures.length;
  const names = r.structures.map((s, i) => `[${i + 1}] ${s.id}  (${s.source}, line ${s.line})`);
  lines.push(...names);
  if (n === 2) {
    lines.push(`EMD            ${fmt(r.emdAngstrom[0][1])} Å`);
    lines.push(`AMD distance   ${fmt(r.amdDistanceAngstrom[0][1])} Å  (lower bound of the EMD)`);
  } else {
    lines.push('', `EMD (Å), PDD depth k = ${r.k}`, ...matrixLines(r.emdAngstrom));
    lines.push('', 'AMD distance (Å), a lower bound of the EMD', ...matrixLines(r.amdDistanceAngstrom));
  }
  lines.push(`k = ${r.k}, hydrogens ${r.hydrogens === 'keep' ? 'kept' : 'dropped'}`);
  for (const x of r.rejected) lines.push(`rejected: ${x.source}, line ${x.line}: ${x.reason}`);
  return `${lines.join('\n')}\n`;
}

export function registerDistance(program: Command): void {
  const cmd = program
    .command('distance')
    .description('EMD and AMD distance (Å) between structures: one pair, or the matrix for more')
    .argument('<inputs...>', 'CIF files (.cif, .cif.gz, multi-block) or folders; every data block is one structure');
  addPddDepth(cmd);
  addHydrogens(cmd, DEFAULT_HYDROGENS);
  addThreads(cmd);
  cmd.option('--json', 'print the result as JSON on stdout');
  cmd.action(async (inputs: string[], o: { json?: boolean; pddDepth: string; hydrogens: string; threads?: string }) => {
    const report = await distanceReport(inputs, { k: parseDepth(o.pddDepth), hydrogens: parseHydrogens(o.hydrogens), threads: parseThreads(o.threads) });
    process.stdout.write(o.json ? `${JSON.stringify(report, null, 2)}\n` : formatDistanceText(report));
  });
}

// ---- helpers ----

function fmt(v: number): string {
  return v.toFixed(6);
}

function matrixLines(m: number[][]): string[] {
  const width = 12;
  const head = ' '.repeat(6) + m.map((_, j) => `[${j + 1}]`.padStart(width)).join('');
  return [head, ...m.map((row, i) => `[${i + 1}]`.padEnd(6) + row.map((v) => fmt(v).padStart(width)).join(''))];
}
