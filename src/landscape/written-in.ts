// Which space groups the members of each duplicate group were written in: a search writes the same minimum in
// P1, in supercells and in other settings, so the kept structure's summary lists the declared groups of its
// members with counts (most first, then by name), e.g. P1 x 7; P21/c x 2; P21/n x 1.
import type { StructureRow } from './schema.js';

/** Per kept structure index, the declared groups of its group's members (kept and duplicates) with counts. */
export function writtenInByKept(rows: readonly StructureRow[]): Map<number, Array<{ spaceGroup: string; count: number }>> {
  const counts = new Map<number, Map<string, number>>();
  for (const r of rows) {
    if (r.keptIndex === null || (r.status !== 'kept' && r.status !== 'duplicate')) continue;
    const name = r.symmetry?.declared ?? 'not stated';
    let m = counts.get(r.keptIndex);
    if (m === undefined) counts.set(r.keptIndex, (m = new Map()));
    m.set(name, (m.get(name) ?? 0) + 1);
  }
  const out = new Map<number, Array<{ spaceGroup: string; count: number }>>();
  for (const [k, m] of counts) {
    out.set(
      k,
      [...m].map(([spaceGroup, count]) => ({ spaceGroup, count })).sort((a, b) => b.count - a.count || (a.spaceGroup < b.spaceGroup ? -1 : a.spaceGroup > b.spaceGroup ? 1 : 0)),
    );
  }
  return out;
}

/** 'P1 x 7; P21/c x 2' (the unique.csv column). */
export function formatWrittenIn(list: ReadonlyArray<{ spaceGroup: string; count: number }>): string {
  return list.map((e) => `${e.spaceGroup} x ${e.count}`).join('; ');
}
