// One CIF data block -> a CrystalRecord (cell, symmetry operations, sites, space group, energy) or a
// RejectedBlock that says, in words a user can act on, what is wrong and on which line.
// Data names follow the CIF core dictionary (IUCr, open standard), with both the current
// (`_space_group_symop_operation_xyz`) and the older (`_symmetry_equiv_pos_as_xyz`) spellings.
import type { BlockResult, CellParams, CrystalRecord, Site, SymOp } from '../types.js';
import { parseSymopXyz } from '../geometry/symmetry.js';
import { settingByOperations, settingLabel, type SpaceGroupSetting } from '../geometry/space-group-table.js';
import {
  declaredSpaceGroup, describe as describeSetting, listedMatchDeclared, settingOps, type DeclaredSpaceGroup, type SpaceGroupItems,
} from './declared-space-group.js';
import { settingFromSites } from '../geometry/setting-from-sites.js';
import { elementFromSite, type ElementReading } from '../geometry/elements.js';
import {
  cifColumn,
  cifNumber,
  CifSyntaxError,
  isMissingAt,
  kindAt,
  lineAt,
  numberAt,
  parseCifBlockShared,
  sameLineAt,
  valueAt,
  ValueKind,
  type CifBlock,
  type CifColumn,
} from './cif.js';
import type { RawBlock } from './cif-split.js';

export interface ReadOptions {
  /** Data name of a numeric item holding the energy (with or without the leading `_`); null for none. */
  energyItem?: string | null;
}

/** Spellings of the operation list, in order of preference (CIF core dictionary; DDLm form last). */
const OP_NAMES = ['_space_group_symop_operation_xyz', '_symmetry_equiv_pos_as_xyz', '_space_group_symop.operation_xyz'];
const HM_NAMES = ['_space_group_name_h-m_alt', '_symmetry_space_group_name_h-m', '_space_group.name_h-m_alt'];
const HALL_NAMES = ['_space_group_name_hall', '_symmetry_space_group_name_hall', '_space_group.name_hall'];
const NUMBER_NAMES = ['_space_group_it_number', '_symmetry_int_tables_number', '_space_group.it_number'];
/** Setting codes ('1', '2', 'h', 'r', 'b1', 'ba-c'): the CIF symmetry dictionary's name, then one some writers use. */
const CODE_NAMES = ['_space_group_it_coordinate_system_code', '_space_group.it_coordinate_system_code', '_space_group_setting'];
const CELL_SETTING_NAMES = ['_symmetry_cell_setting'];
const CELL_NAMES: Array<[keyof CellParams, string]> = [
  ['a', '_cell_length_a'],
  ['b', '_cell_length_b'],
  ['c', '_cell_length_c'],
  ['alpha', '_cell_angle_alpha'],
  ['beta', '_cell_angle_beta'],
  ['gamma', '_cell_angle_gamma'],
];

/** A stated `_cell_volume` further than this from the one computed from the cell is worth a note (0.5 %). */
const VOLUME_NOTE_FRACTION = 0.005;
/** Smallest cell volume taken as a real cell, Å³ (no crystal has a cell this small). */
const MIN_VOLUME_A3 = 1e-3;

/** Turn a block's text into a record or a rejection. Never throws. */
export function blockResult(raw: RawBlock, file: string, opts: ReadOptions = {}): BlockResult {
  if (raw.beforeFirstBlock) {
    return reject(raw, file, `line ${raw.line}: text before the first data_ line is not inside any data block; start the file with a data_NAME line`);
  }
  let block: CifBlock;
  try {
    // The block is finished with before the next parse, so its value ranges may stay in the shared scratch.
    block = parseCifBlockShared(raw.text, raw.line);
  } catch (e) {
    if (e instanceof CifSyntaxError) return reject(raw, file, `line ${e.line}: ${e.message}`);
    return reject(raw, file, `unexpected failure while parsing: ${(e as Error).message}`);
  }
  try {
    const r = recordFromBlock(block, raw.text, file, opts);
    if (typeof r === 'string') return reject(raw, file, r);
    return { kind: 'record', record: r };
  } catch (e) {
    // Defensive: a bug here must not stop the other blocks from being read.
    return reject(raw, file, `unexpected failure while reading the block: ${(e as Error).message}`);
  }
}

/** Build the record from a parsed block; a string return is the rejection reason. */
export function recordFromBlock(block: CifBlock, text: string, file: string, opts: ReadOptions = {}): CrystalRecord | string {
  const notes: string[] = [...block.warnings];

  // A block with neither cell nor sites is not a structure (publication data, reflections): say so plainly.
  if (cifColumn(block, '_cell_length_a') === null && cifColumn(block, '_atom_site_fract_x') === null) {
    return 'the block holds no crystal structure (no _cell_length_* and no _atom_site_fract_*), as in a publication or reflection-data block';
  }

  // ---- cell ----
  const cell = { a: 0, b: 0, c: 0, alpha: 0, beta: 0, gamma: 0 } as CellParams;
  for (const [key, name] of CELL_NAMES) {
    const v = single(block, name);
    if (v === null) return `no ${name}: the cell is incomplete (add ${name})`;
    if (v.kind === ValueKind.Unknown || v.kind === ValueKind.Inapplicable) {
      return `line ${lineAt(v.col, 0)}: ${name} is '${v.value}' (unknown); the cell must be given`;
    }
    const x = numberAt(v.col, 0);
    if (!Number.isFinite(x)) return `line ${lineAt(v.col, 0)}: ${name} is '${clip(v.value)}', not a number`;
    if (key.length === 1 ? x <= 0 : x <= 0 || x >= 180) {
      return `line ${lineAt(v.col, 0)}: ${name} is ${v.value}, outside the possible range (${key.length === 1 ? 'lengths must be > 0 Å' : 'angles must lie between 0 and 180 degrees'})`;
    }
    cell[key] = x;
  }
  const volumeA3 = cellVolumeA3(cell);
  if (!(volumeA3 > MIN_VOLUME_A3)) {
    return `the cell angles alpha=${cell.alpha} beta=${cell.beta} gamma=${cell.gamma} give zero or negative volume; check the _cell_angle_* values`;
  }
  const statedVolume = single(block, '_cell_volume');
  if (statedVolume !== null && statedVolume.kind !== ValueKind.Unknown && statedVolume.kind !== ValueKind.Inapplicable) {
    const v = cifNumber(statedVolume.value);
    if (Number.isFinite(v) && Math.abs(v - volumeA3) > VOLUME_NOTE_FRACTION * volumeA3) {
      notes.push(
        `stated _cell_volume ${statedVolume.value} differs from ${volumeA3.toFixed(2)} Å³ computed from the cell by more than 0.5 %; the cell parameters are used`,
      );
    }
  }

  // ---- space group and operations ----
  const hm = firstText(block, HM_NAMES);
  const hall = firstText(block, HALL_NAMES);
  const items: SpaceGroupItems = {
    hm, hall, number: firstText(block, NUMBER_NAMES), code: firstText(block, CODE_NAMES), cellSetting: firstText(block, CELL_SETTING_NAMES),
  };
  const listed = readListedOps(block, notes);
  if (typeof listed === 'string') return listed;
  const declared = declaredSpaceGroup(items, cell);
  let spaceGroup = hm ?? hall;
  let ops: SymOp[];
  let opsOrigin: CrystalRecord['opsOrigin'];
  let setting: SpaceGroupSetting | null = null;
  if (declared !== null && 'unreadable' in declared) {
    if (listed === null) {
      return (
        `no symmetry operations are listed and ${declared.unreadable}; this reader knows every International Tables setting ` +
        `in the usual spellings ('P 21/c', 'P 1 21/c 1', 'R -3 c:H', 'F d -3 m:2', 'Pnma') and any Hall symbol; ` +
        `list the operations with _space_group_symop_operation_xyz or correct the symbol`
      );
    }
    notes.push(`${declared.unreadable}; the listed operations are used`);
  }
  const usable = declared !== null && !('unreadable' in declared) ? declared : null;
  if (usable !== null) notes.push(...usable.conflicts);
  if (listed !== null) {
    ops = listed.ops;
    opsOrigin = 'listed';
    if (usable !== null) compareWithDeclared(ops, listed.textKey, usable, items, notes);
  } else if (usable !== null) {
    ops = usable.ops;
    opsOrigin = 'symbol';
    setting = usable.setting;
  } else {
    ops = [{ rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], trans: [0, 0, 0] }];
    opsOrigin = 'identity';
    notes.push('no symmetry operations and no space-group symbol: P1 (identity only) assumed');
  }

  // ---- sites ----
  const sites = readSites(block, notes);
  if (typeof sites === 'string') return sites;

  if (opsOrigin === 'symbol' && usable !== null) {
    // Settings the symbol and cell left open: the atom sites may decide (./setting-from-sites.ts).
    if (usable.open.length > 1) {
      const picked = settingFromSites(cell, sites, usable.open.map(settingOps));
      if (picked.best !== null) {
        setting = usable.open[picked.best]!;
        ops = settingOps(setting);
        const fits = picked.fits!;
        notes.push(
          `'${usable.text}' does not say which of ${usable.open.length} settings is meant; the atom sites decide: ` +
            usable.open.map((s, i) => `'${settingLabel(s)}' gives ${fits[i]!.atoms} atoms per cell with ${fits[i]!.overlaps} overlapping pair(s)`).join(', ') +
            `; took '${settingLabel(setting)}' (fewest overlapping atoms, then fewest atoms: sites written for one origin sit on its special positions)`,
        );
      } else {
        notes.push(usable.undecided!);
      }
    }
    ops = ops.map((op) => ({ rot: op.rot.slice(), trans: op.trans.slice() }));
    if (spaceGroup === null && setting !== null) spaceGroup = settingLabel(setting);
    notes.push(...usable.decisions);
    const what = usable.from === 'number' ? `space-group number ${usable.text}` : `${usable.from} symbol '${usable.text}'`;
    notes.push(`no operations are listed: the ${ops.length} operations were built from the ${what} (${describeSetting(setting)})`);
  }

  // ---- energy ----
  const energy = readEnergy(block, opts.energyItem ?? null, notes);

  return {
    id: block.name,
    file,
    block: block.name,
    source: `${file}#${block.name}`,
    line: block.line,
    cell,
    ops,
    opsOrigin,
    spaceGroup,
    ...(setting === null ? {} : { setting }),
    sites,
    energy,
    text,
    notes: dedupe(notes),
  };
}

/** Cell volume in Å³ from lengths and angles (International Tables for Crystallography Vol. B; common practice). */
export function cellVolumeA3(cell: CellParams): number {
  const d = Math.PI / 180;
  const ca = Math.cos(cell.alpha * d);
  const cb = Math.cos(cell.beta * d);
  const cg = Math.cos(cell.gamma * d);
  const r = 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg;
  return r > 0 ? cell.a * cell.b * cell.c * Math.sqrt(r) : 0;
}

// ---- symmetry ----

/**
 * The listed operations (null when none are listed), or a rejection reason.
 * A one-column loop whose operations were written unquoted with spaces (`-x, y, -z`) arrives split into
 * several values; values on the same line are joined until they form three comma-separated parts.
 */
function readListedOps(block: CifBlock, notes: string[]): { ops: SymOp[]; textKey: string } | string | null {
  let col: CifColumn | null = null;
  let name = '';
  for (const n of OP_NAMES) {
    col = cifColumn(block, n);
    if (col !== null) {
      name = n;
      break;
    }
  }
  if (col === null) return null;
  const ops: SymOp[] = [];
  let textKey = '';
  const bareLoop = col.stride === 1;
  let joined = false;
  for (let r = 0; r < col.length; r++) {
    const kind = kindAt(col, r);
    if (kind === ValueKind.Unknown || kind === ValueKind.Inapplicable) continue;
    let text = valueAt(col, r);
    const first = r;
    if (bareLoop && kind === ValueKind.Bare) {
      // Join split pieces on the same line: `-x,` `y,` `-z` -> `-x,y,-z`.
      while (needsMore(text) && r + 1 < col.length) {
        if (!sameLineAt(col, r, r + 1) || kindAt(col, r + 1) !== ValueKind.Bare) break;
        r++;
        text += valueAt(col, r);
        joined = true;
      }
    }
    let op: SymOp;
    try {
      op = cachedOp(text);
    } catch (e) {
      return `line ${lineAt(col, first)}: symmetry operation ${ops.length + 1} of ${name} ('${clip(text)}') cannot be read: ${(e as Error).message}`;
    }
    ops.push(op);
    textKey += `${text}\n`;
  }
  if (joined) notes.push(`operations written with spaces and without quotes were joined (${name})`);
  if (ops.length === 0) return null;
  return { ops, textKey };
}

/** True when an operation text still lacks parts (fewer than two commas, or a trailing comma). */
function needsMore(text: string): boolean {
  let commas = 0;
  for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 44) commas++;
  return commas < 2 || text.charCodeAt(text.length - 1) === 44;
}

/** Operation text -> parsed op; prediction files repeat the same few texts in every block. */
const opCache = new Map<string, SymOp>();
const OP_CACHE_MAX = 4096;

function cachedOp(text: string): SymOp {
  let op = opCache.get(text);
  if (op === undefined) {
    op = parseSymopXyz(text);
    if (opCache.size >= OP_CACHE_MAX) opCache.clear();
    opCache.set(text, op);
  }
  // Each record gets its own arrays, so no caller can change another record's operations.
  return { rot: op.rot.slice(), trans: op.trans.slice() };
}

/** (declared items, listed operation texts) -> whether they agree; prediction files repeat both in every block. */
const comparedCache = new Map<string, boolean>();

/** Note when listed operations are not a setting the declared symbol or number names (the listed operations are used). */
function compareWithDeclared(ops: SymOp[], textKey: string, declared: DeclaredSpaceGroup, items: SpaceGroupItems, notes: string[]): void {
  const pairKey = `${declared.from}\u0000${declared.text}\u0000${items.code ?? ''}\u0000${items.cellSetting ?? ''}\u0000${textKey}`;
  let same = comparedCache.get(pairKey);
  if (same === undefined) {
    same = listedMatchDeclared(ops, declared);
    if (comparedCache.size >= OP_CACHE_MAX) comparedCache.clear();
    comparedCache.set(pairKey, same);
  }
  if (same) return;
  const what = declared.from === 'number' ? `space-group number ${declared.text}` : `${declared.from} symbol '${declared.text}'`;
  let actual: string;
  try {
    const match = settingByOperations(ops);
    actual = match === null ? 'they are no International Tables setting (another origin or cell, or not a whole group)' : `they are ${describeSetting(match)}`;
  } catch {
    actual = 'they do not form a group';
  }
  notes.push(
    `the ${ops.length} listed operations are not the setting of the declared ${what} (${describeSetting(declared.setting)}, ` +
      `${declared.ops.length} operations); ${actual}; the listed operations are used`,
  );
}

// ---- sites ----

/** (type symbol, label) -> element reading; prediction files repeat the same labels in every block. */
const siteElementCache = new Map<string, Map<string, ElementReading>>();
let siteCacheSize = 0;
const typeElementCache = new Map<string, ElementReading>();
const SITE_CACHE_MAX = 8192;

function cachedElement(typeText: string | null, label: string): ElementReading {
  if (typeText !== null && typeText !== '' && typeText !== '?' && typeText !== '.' && typeText.trim() === typeText) {
    // With a type symbol the label plays no part in the reading (only in error messages, made fresh).
    let el = typeElementCache.get(typeText);
    if (el === undefined) {
      el = elementFromSite(typeText, label);
      if ('error' in el) return el;
      if (typeElementCache.size >= SITE_CACHE_MAX) typeElementCache.clear();
      typeElementCache.set(typeText, el);
    }
    return el;
  }
  const key = typeText ?? '\u0000';
  let byLabel = siteElementCache.get(key);
  if (byLabel === undefined) {
    byLabel = new Map();
    siteElementCache.set(key, byLabel);
  }
  let el = byLabel.get(label);
  if (el === undefined) {
    el = elementFromSite(typeText, label);
    if (siteCacheSize >= SITE_CACHE_MAX) {
      siteElementCache.clear();
      siteCacheSize = 0;
    }
    byLabel.set(label, el);
    siteCacheSize++;
  }
  return el;
}

function readSites(block: CifBlock, notes: string[]): Site[] | string {
  const xs = cifColumn(block, '_atom_site_fract_x');
  const ys = cifColumn(block, '_atom_site_fract_y');
  const zs = cifColumn(block, '_atom_site_fract_z');
  if (xs === null || ys === null || zs === null) {
    if (cifColumn(block, '_atom_site_cartn_x') !== null) {
      return 'atom sites are given only in Cartesian coordinates (_atom_site_Cartn_x); fractional coordinates (_atom_site_fract_x/y/z) are needed';
    }
    const missing = xs === null ? '_atom_site_fract_x' : ys === null ? '_atom_site_fract_y' : '_atom_site_fract_z';
    return `no atom sites: ${missing} is missing (a structure needs _atom_site_label and _atom_site_fract_x/y/z)`;
  }
  const n = xs.length;
  if (ys.length !== n || zs.length !== n || !sameLoop(xs, ys) || !sameLoop(xs, zs)) {
    return `line ${lineAt(xs, 0)}: _atom_site_fract_x, _y and _z are not in the same loop`;
  }
  const labels = sameLoopColumn(block, '_atom_site_label', xs);
  const types = sameLoopColumn(block, '_atom_site_type_symbol', xs);
  const occs = sameLoopColumn(block, '_atom_site_occupancy', xs);
  const groups = sameLoopColumn(block, '_atom_site_disorder_group', xs);
  const assemblies = sameLoopColumn(block, '_atom_site_disorder_assembly', xs);
  const calc = sameLoopColumn(block, '_atom_site_calc_flag', xs);
  const attachedH = sameLoopColumn(block, '_atom_site_attached_hydrogens', xs);
  if (labels === null && types === null) {
    return `line ${lineAt(xs, 0)}: the atom-site loop has neither _atom_site_label nor _atom_site_type_symbol, so no element can be read`;
  }

  // Elements named in _chemical_formula_sum settle labels such as 'NA1' (Na, not N) when no type symbol is given.
  const formula = types === null ? formulaElements(block) : null;
  const sites: Site[] = [];
  const unknownH: string[] = [];
  const dummies: string[] = [];
  let partial = 0;
  for (let i = 0; i < n; i++) {
    const label = labels !== null ? valueAt(labels, i) : `${valueAt(types!, i)}${i + 1}`;
    if (calc !== null && valueAt(calc, i).toLowerCase() === 'dum') {
      dummies.push(label);
      continue;
    }
    const typeText = types !== null && !isMissingAt(types, i) ? valueAt(types, i) : null;
    let el = cachedElement(typeText, label);
    if (typeText === null && formula !== null && !('error' in el) && !formula.has(el.element)) {
      el = labelByFormula(label, formula) ?? el;
    }
    if ('error' in el) {
      if (kindAt(xs, i) === ValueKind.Unknown) {
        return `line ${lineAt(xs, i)}: atom-site row ${i + 1} ('${label}') has '?' in place of its coordinates and no readable element; complete or remove the row`;
      }
      return `line ${lineAt(xs, i)}: ${el.error}`;
    }
    if (el.note !== undefined) notes.push(el.note);

    // Starting values that are not integers make the array hold doubles from the start (no change of element
    // storage when the coordinates are written); all three are overwritten below.
    const frac: [number, number, number] = [0.5, 0.5, 0.5];
    let unknownCoord = false;
    for (let d = 0; d < 3; d++) {
      const col = d === 0 ? xs : d === 1 ? ys : zs;
      if (isMissingAt(col, i)) {
        unknownCoord = true;
        break;
      }
      const v = numberAt(col, i);
      if (!Number.isFinite(v)) {
        return `line ${lineAt(col, i)}: ${'xyz'[d]} coordinate of site ${label} is '${clip(valueAt(col, i))}', not a number`;
      }
      frac[d] = v;
    }
    if (unknownCoord) {
      if (el.element === 'H') {
        unknownH.push(label);
        continue;
      }
      return `line ${lineAt(xs, i)}: site ${label} (${el.element}) has '?' in place of its coordinates; the structure would be incomplete without it`;
    }

    let occupancy = 1;
    if (occs !== null) {
      const k = kindAt(occs, i);
      if (k !== ValueKind.Unknown && k !== ValueKind.Inapplicable) {
        occupancy = numberAt(occs, i);
        if (!Number.isFinite(occupancy) || occupancy < 0) {
          return `line ${lineAt(xs, i)}: occupancy of site ${label} is '${clip(valueAt(occs, i))}', not a number between 0 and 1`;
        }
        if (occupancy > 1.0001) notes.push(`site ${label} has occupancy ${valueAt(occs, i)} > 1`);
        if (occupancy < 0.9999) partial++;
      }
    }
    // Hydrogens the file counts on this atom without giving them sites (CIF core: _atom_site_attached_hydrogens).
    const hydrogens = attachedH !== null && !isMissingAt(attachedH, i) ? numberAt(attachedH, i) : 0;
    sites.push({
      label,
      element: el.element,
      frac,
      occupancy,
      disorderGroup: groups !== null ? textOrNull(groups, i) : null,
      disorderAssembly: assemblies !== null ? textOrNull(assemblies, i) : null,
      ...(Number.isInteger(hydrogens) && hydrogens > 0 && hydrogens <= 4 ? { attachedHydrogens: hydrogens } : {}),
    });
  }
  if (dummies.length > 0) notes.push(`dummy sites (calc flag 'dum') left out: ${listLabels(dummies)}`);
  if (unknownH.length > 0) notes.push(`hydrogen sites with '?' coordinates left out: ${listLabels(unknownH)}`);
  if (partial > 0) notes.push(`${partial} site(s) with partial occupancy`);
  if (sites.length === 0) return `line ${lineAt(xs, 0)}: the atom-site loop lists no site with coordinates`;
  return sites;
}

/** Element symbols of `_chemical_formula_sum` ('C9 H18 N2 O2' -> {C, H, N, O}), or null when absent. */
function formulaElements(block: CifBlock): Set<string> | null {
  const v = single(block, '_chemical_formula_sum');
  if (v === null || v.kind === ValueKind.Unknown || v.kind === ValueKind.Inapplicable) return null;
  const out = new Set<string>();
  for (const part of v.value.split(/\s+/)) {
    const m = /^([A-Z][a-z]?)/.exec(part);
    if (m !== null) out.add(m[1]!);
  }
  return out.size > 0 ? out : null;
}

/** Re-read a label whose first reading is not in the formula: try its one- and two-letter prefixes. */
function labelByFormula(label: string, formula: Set<string>): ElementReading | null {
  for (const len of [2, 1]) {
    if (label.length < len) continue;
    const r = elementFromSite(label.slice(0, len), label);
    if (!('error' in r) && formula.has(r.element)) {
      return { element: r.element, note: `label '${label}' read as ${r.element}, the element _chemical_formula_sum names` };
    }
  }
  return null;
}

/** The column `name` if it exists and sits in the same loop as `ref` (else null). */
function sameLoopColumn(block: CifBlock, name: string, ref: CifColumn): CifColumn | null {
  const col = cifColumn(block, name);
  if (col === null) return null;
  return sameLoop(col, ref) ? col : null;
}

function sameLoop(a: CifColumn, b: CifColumn): boolean {
  return a.loop !== null && a.loop === b.loop && a.length === b.length;
}

function textOrNull(col: CifColumn, i: number): string | null {
  return isMissingAt(col, i) ? null : valueAt(col, i);
}

// ---- energy ----

function readEnergy(block: CifBlock, item: string | null, notes: string[]): number | null {
  if (item === null || item === '') return null;
  const name = item.startsWith('_') ? item : `_${item}`;
  const col = cifColumn(block, name);
  if (col === null) {
    notes.push(`no energy: the block has no ${name}`);
    return null;
  }
  if (col.length !== 1) {
    notes.push(`no energy: ${name} is a loop with ${col.length} values, not a single value`);
    return null;
  }
  const text = valueAt(col, 0);
  if (isMissingAt(col, 0)) {
    notes.push(`no energy: ${name} is '${text}' (line ${lineAt(col, 0)})`);
    return null;
  }
  const v = cifNumber(text.trim());
  if (!Number.isFinite(v)) {
    notes.push(`no energy: ${name} is '${clip(text)}' (line ${lineAt(col, 0)}), not a number`);
    return null;
  }
  return v;
}

// ---- helpers ----

/** The first value of `name` (its line is counted only when a message needs it, from `col`). */
function single(block: CifBlock, name: string): { value: string; kind: ValueKind; col: CifColumn } | null {
  const col = cifColumn(block, name);
  if (col === null) return null;
  return { value: valueAt(col, 0), kind: kindAt(col, 0), col };
}

/** First of several spellings present with a real value (not ? or .), trimmed. */
function firstText(block: CifBlock, names: string[]): string | null {
  for (const n of names) {
    const v = single(block, n);
    if (v !== null && v.kind !== ValueKind.Unknown && v.kind !== ValueKind.Inapplicable && v.value.trim() !== '') return v.value.trim();
  }
  return null;
}

function reject(raw: RawBlock, file: string, reason: string): BlockResult {
  return {
    kind: 'rejected',
    rejected: { id: raw.name, file, block: raw.name, source: `${file}#${raw.name}`, line: raw.line, reason, text: raw.text },
  };
}

function listLabels(labels: string[]): string {
  return labels.length <= 8 ? labels.join(', ') : `${labels.slice(0, 8).join(', ')} and ${labels.length - 8} more`;
}

function dedupe(notes: string[]): string[] {
  return notes.length < 2 ? notes : [...new Set(notes)];
}

function clip(v: string): string {
  return v.length > 40 ? `${v.slice(0, 37)}...` : v;
}
