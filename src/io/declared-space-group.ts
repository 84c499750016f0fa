// What a CIF block says about its space group besides a list of operations: the Hall symbol, the
// Hermann–Mauguin symbol, the International Tables number and setting hints (CIF core dictionary names,
// IUCr open standard). This file turns those texts into one setting (or, for a Hall symbol outside the table,
// one operation list), with notes where they disagree with each other; src/io/crystal-record.ts decides
// between these and listed operations (listed operations always win).
//
// Order of trust: a readable Hall symbol (it fixes the origin and axes exactly), then the H-M symbol, then the
// number. The others are checked against the one used and any disagreement is a note.
import type { CellParams, SymOp } from '../types.js';
import { opsFromHall } from '../geometry/hall.js';
import { opKey } from '../geometry/symmetry.js';
import { settingByHall, settingLabel, type SpaceGroupSetting } from '../geometry/space-group-table.js';
import { cellShapeKey, settingFromNumber, settingFromSymbol, type SettingHints } from '../geometry/space-group-symbol.js';

/** The texts a block gives (trimmed, null when absent or '?'). */
export interface SpaceGroupItems {
  hm: string | null;
  hall: string | null;
  number: string | null;
  /** `_space_group_IT_coordinate_system_code` or a similar setting item. */
  code: string | null;
  /** `_symmetry_cell_setting`. */
  cellSetting: string | null;
}

/** The space group the items name. */
export interface DeclaredSpaceGroup {
  /** Which item the operations come from. */
  from: 'Hall' | 'H-M' | 'number';
  /** The text of that item. */
  text: string;
  /** The table entry used; null for a Hall symbol outside the table (its operations are still known). */
  setting: SpaceGroupSetting | null;
  /** Operations of the setting (identity first). */
  ops: SymOp[];
  /** Every operation set the used item allows (one per allowed setting), as sets of operation keys, to test listed operations against. */
  allowedKeys: Set<string>[];
  /** Decisions taken to pick the setting (ambiguity, cell): worth a note only when the operations are built from it. */
  decisions: string[];
  /** Settings still open after the items and the cell (more than one: the atom sites may decide; `setting` is the default among them). */
  open: SpaceGroupSetting[];
  /** The note for taking the default among `open`, when more than one is open. */
  undecided: string | null;
  /** Disagreements between the items, or items that could not be read: always worth a note. */
  conflicts: string[];
}

/** Results by items and cell shape: prediction files repeat one symbol in every block. */
const declaredCache = new Map<string, DeclaredSpaceGroup | { unreadable: string } | null>();
const DECLARED_CACHE_MAX = 1024;

/**
 * A space group from the items, a reason when items are given but none can be read, or null when there are none.
 * The result may be shared between calls: do not change it.
 */
export function declaredSpaceGroup(items: SpaceGroupItems, cell: CellParams): DeclaredSpaceGroup | { unreadable: string } | null {
  const key = `${items.hm}\u0000${items.hall}\u0000${items.number}\u0000${items.code}\u0000${items.cellSetting}\u0000${cellShapeKey(cell)}`;
  let result = declaredCache.get(key);
  if (result === undefined) {
    result = readDeclared(items, cell);
    if (declaredCache.size >= DECLARED_CACHE_MAX) declaredCache.clear();
    declaredCache.set(key, result);
  }
  return result;
}

function readDeclared(items: SpaceGroupItems, cell: CellParams): DeclaredSpaceGroup | { unreadable: string } | null {
  const { hm, hall, number } = items;
  if (hm === null && hall === null && number === null) return null;
  const hints: SettingHints = { code: items.code, cellSetting: items.cellSetting, cell };
  const conflicts: string[] = [];

  // Each item read on its own.
  let fromHall: { setting: SpaceGroupSetting | null; ops: SymOp[] } | null = null;
  if (hall !== null) {
    const s = settingByHall(hall);
    if (s !== null) fromHall = { setting: s, ops: cachedOps(s.hall) };
    else {
      try {
        fromHall = { setting: null, ops: cachedOps(hall) };
      } catch {
        fromHall = null;
      }
    }
  }
  const fromHm = hm === null ? null : settingFromSymbol(hm, hints);
  const n = number === null ? NaN : Number(number.replace(/\(\d+\)$/, ''));
  const fromNumber = number === null ? null : settingFromNumber(n, hints);

  let used: DeclaredSpaceGroup;
  if (fromHall !== null) {
    used = {
      from: 'Hall', text: hall!, setting: fromHall.setting, ops: fromHall.ops,
      allowedKeys: [fromHall.setting === null ? keysOf(fromHall.ops) : cachedKeys(fromHall.setting.hall)], decisions: [], conflicts,
      open: fromHall.setting === null ? [] : [fromHall.setting], undecided: null,
    };
    if (fromHm !== null && !fromHm.allowed.some((s) => sameKeys(cachedKeys(s.hall), used.allowedKeys[0]!))) {
      conflicts.push(
        `the Hall symbol '${hall}' and the H-M symbol '${hm}' name different settings ` +
          `(${describe(fromHall.setting)} and ${fromHm.allowed.map((s) => `'${settingLabel(s)}'`).join(' or ')}); the Hall symbol is used`,
      );
    }
  } else if (fromHm !== null) {
    used = {
      from: 'H-M', text: hm!, setting: fromHm.setting, ops: cachedOps(fromHm.setting.hall),
      allowedKeys: fromHm.allowed.map((s) => cachedKeys(s.hall)), decisions: fromHm.notes, conflicts,
      open: fromHm.open, undecided: fromHm.undecided,
    };
  } else if (fromNumber !== null) {
    used = {
      from: 'number', text: String(n), setting: fromNumber.setting, ops: cachedOps(fromNumber.setting.hall),
      allowedKeys: fromNumber.allowed.map((s) => cachedKeys(s.hall)), decisions: fromNumber.notes, conflicts,
      open: fromNumber.open, undecided: fromNumber.undecided,
    };
  } else {
    const parts: string[] = [];
    if (hm !== null) parts.push(`the H-M symbol '${hm}' names no space-group setting this reader knows`);
    if (hall !== null) parts.push(`the Hall symbol '${hall}' cannot be read`);
    if (number !== null) parts.push(`the space-group number '${number}' is not one of 1..230`);
    return { unreadable: parts.join('; ') };
  }

  if (used.from !== 'H-M' && hm !== null && fromHm === null) {
    conflicts.push(`the H-M symbol '${hm}' names no setting this reader knows; the ${used.from === 'Hall' ? 'Hall symbol' : 'space-group number'} is used`);
  }
  if (hall !== null && fromHall === null) conflicts.push(`the Hall symbol '${hall}' cannot be read; the ${used.from === 'H-M' ? 'H-M symbol' : 'space-group number'} is used`);
  const usedNumber = used.setting?.number ?? null;
  if (number !== null && used.from !== 'number') {
    if (fromNumber === null) conflicts.push(`the space-group number '${number}' is not one of 1..230; it was ignored`);
    else if (usedNumber !== null && usedNumber !== n) {
      conflicts.push(`the space-group number ${n} does not match the ${used.from} symbol '${used.text}' (group ${usedNumber}); the symbol is used`);
    }
  }
  return used;
}

/** Whether listed operations are one of the operation sets the declared space group allows. */
export function listedMatchDeclared(listed: SymOp[], declared: DeclaredSpaceGroup): boolean {
  const keys = keysOf(listed);
  return declared.allowedKeys.some((k) => sameKeys(k, keys));
}

/** 'group 14, 'P 1 21/c 1', Hall '-P 2ybc'' for notes; a Hall symbol outside the table says so. */
export function describe(s: SpaceGroupSetting | null): string {
  return s === null ? 'a setting outside the International Tables list' : `group ${s.number}, '${settingLabel(s)}', Hall '${s.hall}'`;
}

/** Operations of a table setting (shared: copy before changing them). */
export function settingOps(s: SpaceGroupSetting): SymOp[] {
  return cachedOps(s.hall);
}

/** Hall symbol -> its operations; files repeat a few symbols in every block. Throws for an unreadable symbol. */
const opsCache = new Map<string, SymOp[]>();
const OPS_CACHE_MAX = 1024;

function cachedOps(hall: string): SymOp[] {
  let ops = opsCache.get(hall);
  if (ops === undefined) {
    ops = opsFromHall(hall);
    if (opsCache.size >= OPS_CACHE_MAX) opsCache.clear();
    opsCache.set(hall, ops);
  }
  return ops;
}

/** Operation keys of a table setting, by its Hall symbol. */
const keysCache = new Map<string, Set<string>>();

function cachedKeys(hall: string): Set<string> {
  let keys = keysCache.get(hall);
  if (keys === undefined) {
    keys = keysOf(cachedOps(hall));
    if (keysCache.size >= OPS_CACHE_MAX) keysCache.clear();
    keysCache.set(hall, keys);
  }
  return keys;
}

function keysOf(ops: SymOp[]): Set<string> {
  return new Set(ops.map(opKey));
}

function sameKeys(a: Set<string>, b: Set<string>): boolean {
  if (a.size !== b.size) return false;
  for (const k of a) if (!b.has(k)) return false;
  return true;
}
