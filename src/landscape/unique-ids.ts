// Unique structure ids. A structure's id is its block name, but runs and databases that are combined often
// repeat block names (every run calls its first structure "cand-0001"). Every reference in the outputs
// (duplicate_of, nearest, edges, diff and locate tables) must name exactly one structure, so each block whose
// name is shared gets the id `name~n`, n its occurrence in input order (1, 2, ...), skipping any n whose id is
// already the name of another block. Blocks with a name of their own keep it. The empty name (a file that
// could not be split into blocks) is never referenced and stays as it is.

/** The separator between a shared block name and its occurrence number. */
export const ID_SUFFIX_SEPARATOR = '~';

export interface UniqueIds {
  /** One id per input name, unique among themselves (apart from empty names). */
  ids: string[];
  /** Per input name: how many inputs share it (1 for a name of its own). */
  shared: number[];
}

/** Unique ids for `names` (block names in input order). */
export function uniqueIds(names: readonly string[]): UniqueIds {
  const count = new Map<string, number>();
  for (const n of names) count.set(n, (count.get(n) ?? 0) + 1);
  const taken = new Set<string>();
  for (const n of names) if (count.get(n) === 1) taken.add(n);
  const next = new Map<string, number>();
  const ids: string[] = [];
  const shared: number[] = [];
  for (const n of names) {
    const c = count.get(n)!;
    shared.push(c);
    if (c === 1 || n === '') {
      ids.push(n);
      continue;
    }
    let s = next.get(n) ?? 1;
    let id = `${n}${ID_SUFFIX_SEPARATOR}${s}`;
    while (taken.has(id)) id = `${n}${ID_SUFFIX_SEPARATOR}${++s}`;
    next.set(n, s + 1);
    taken.add(id);
    ids.push(id);
  }
  return { ids, shared };
}

/** The note on a structure whose block name is shared. */
export function sharedNameNote(name: string, shared: number, id: string): string {
  return `the block name ${name} is used by ${shared} input blocks, so this structure's id is ${id}`;
}

/**
 * A block's text with its `data_` line naming `id` instead of `block`: a CIF file may not hold two blocks of one
 * name (CIF 1.1 syntax, IUCr), so unique.cif writes a renamed structure under its id.
 */
export function renameBlockText(text: string, block: string, id: string): string {
  if (block === id) return text;
  const at = text.search(new RegExp(`^data_${block.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?=[ \t\r\n]|$)`, 'm'));
  if (at < 0) return text;
  return `${text.slice(0, at)}data_${id}${text.slice(at + 5 + block.length)}`;
}
