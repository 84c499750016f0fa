// Stage "read": every data block of the inputs becomes one Work entry, in input order. A block that cannot be
// read becomes a rejected row with its reason; nothing is dropped.
import type { BlockResult } from '../../types.js';
import type { StructureRow } from '../schema.js';
import { readStructures } from '../../io/read.js';
import { blockKey } from '../cache.js';
import { cellVolume } from '../../geometry/cell.js';
import type { CellParams } from '../../types.js';
import type { SiftState, Work } from './state.js';

export async function readStage(s: SiftState): Promise<void> {
  s.progress.stage('reading structures');
  for await (const r of readStructures(s.params.inputs, { energyItem: s.params.energyItem })) {
    s.work.push(workFromBlock(r, s.work.length));
    if (s.work.length % 500 === 0) s.progress.tick(s.work.length);
  }
  s.progress.done();
}

export function workFromBlock(r: BlockResult, index: number): Work {
  const base = r.kind === 'record' ? r.record : r.rejected;
  const row: StructureRow = {
    index,
    id: base.id,
    source: base.source,
    file: base.file,
    block: base.block,
    line: base.line,
    status: 'rejected',
    reason: '',
    energy: null,
    energyRel: null,
    densityGPerCm3: null,
    atoms: null,
    spaceGroup: r.kind === 'record' ? r.record.spaceGroup : null,
    symmetry: null,
    cell: null,
    z: null,
    zPrime: null,
    formulas: [],
    keptIndex: null,
    duplicateOf: null,
    distanceToKept: null,
    family: -1,
    nearestIndex: null,
    nearest: null,
    nearestDistance: null,
    nnDistance: null,
    members: 0,
    writtenIn: [],
    notes: r.kind === 'record' ? r.record.notes.slice() : [],
  };
  if (r.kind === 'rejected') {
    row.reason = r.rejected.reason;
    return { row, record: null, text: r.rejected.text, key: '', pdd: null, amd: null, facts: null, setNotes: [] };
  }
  // Usable so far; the status is settled later (kept, duplicate, outside-window or rejected).
  row.status = 'kept';
  const c = r.record.cell;
  row.cell = { a: c.a, b: c.b, c: c.c, alpha: c.alpha, beta: c.beta, gamma: c.gamma, volume: volumeOrNull(c) };
  return { row, record: r.record, text: r.record.text, key: blockKey(r.record.text), pdd: null, amd: null, facts: null, setNotes: [] };
}

/** Cell volume in Å³, or null for angles that span no cell (such a block is rejected by a later stage). */
function volumeOrNull(c: CellParams): number | null {
  try {
    return cellVolume(c);
  } catch {
    return null;
  }
}
