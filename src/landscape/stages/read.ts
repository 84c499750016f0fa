// Stage "read": every data block of the inputs becomes one Work entry, in input order. A block that cannot be
// read becomes a rejected row with its reason; nothing is dropped.
import type { BlockResult } from '../../types.js';
import type { StructureRow } from '../schema.js';
import { readStructures } from '../../io/read.js';
import { blockKey } from '../cache.js';
import { cellVolume } from '../../geometry/cell.js';
import type { CellParams } from '../../types.js';
import type { SiftState, Work } from './state.js';
import { sharedNameNote, uniqueIds } from '../unique-ids.js';

export async function readStage(s: SiftState): Promise<void> {
  s.progress.stage('reading structures');
  for await (const r of readStructures(s.params.inputs, { energyItem: s.params.energyItem })) {
    s.work.push(workFromBlock(r, s.work.length));
    if (s.work.length % 500 === 0) s.progress.tick(s.work.length);
  }
  giveUniqueIds(s.work);
  s.progress.done();
}

/**
 * Blocks that share a name (runs or databases combined) get ids of their own (src/landscape/unique-ids.ts), so
 * that every reference in the outputs names one structure; the row keeps its block name and says so in a note.
 */
export function giveUniqueIds(work: Work[]): void {
  const { ids, shared } = uniqueIds(work.map((w) => w.row.id));
  work.forEach((w, i) => {
    if (ids[i] === w.row.id) return;
    w.row.notes.push(sharedNameNote(w.row.id, shared[i], ids[i]));
    w.row.id = ids[i];
  });
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
    composition: null,
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
    flags: [],
    otherChemistryIndex: null,
    otherChemistry: null,
    otherComposition: null,
    otherChemistryDistance: null,
    energyOffset: null,
    flatPartnerIndices: [],
    flatPartners: [],
    flatPartnerDistance: null,
  };
  if (r.kind === 'rejected') {
    row.reason = r.rejected.reason;
    return { row, record: null, text: r.rejected.text, key: '', pdd: null, amd: null, facts: null, setNotes: [], elements: null };
  }
  // Usable so far; the status is settled later (kept, duplicate, outside-window or rejected).
  row.status = 'kept';
  const c = r.record.cell;
  row.cell = { a: c.a, b: c.b, c: c.c, alpha: c.alpha, beta: c.beta, gamma: c.gamma, volume: volumeOrNull(c) };
  return { row, record: r.record, text: r.record.text, key: blockKey(r.record.text), pdd: null, amd: null, facts: null, setNotes: [], elements: null };
}

/** Cell volume in Å³, or null for angles that span no cell (such a block is rejected by a later stage). */
function volumeOrNull(c: CellParams): number | null {
  try {
    return cellVolume(c);
  } catch {
    return null;
  }
}
