// Space-group symbols as files really write them -> a setting of the table in ./space-group-table.ts.
//
// Hermann–Mauguin symbols (International Tables for Crystallography Vol. A) are read in every spelling the
// CIF core dictionary's `_space_group_name_H-M_alt` and older `_symmetry_space_group_name_H-M` meet in
// practice: with or without spaces, screw axes as `21`, `2_1` or `2(1)`, bars as `-`, upper or lower case,
// short, extended ('P 1 21/c 1') or full ('P 21/n 21/m 21/a') symbols, the pre-1983 cubic symbols without
// bars ('F m 3 m'), the 'e' glide names of International Tables 2002 ('C m c e'), setting suffixes `:1` `:2`
// `:H` `:R` `:b1` `:ba-c`, trailing origin markers `S` (origin choice 1) and `Z` (origin choice 2, origin at
// a centre of inversion) and `H`/`R` axes markers (common practice in structure databases), remarks in braces
// or parentheses ('{rhombohedral axes}', '(origin choice 2)'), and the `H` lattice letter used for
// rhombohedral groups on hexagonal axes ('H 3 2'). A number alone (`_space_group_IT_number`) names a group.
//
// When a spelling leaves several settings open (a number alone, a rhombohedral symbol without axes, a symbol of
// a group with two origins, a monoclinic short symbol naming more than one unique axis), the cell decides where
// it can (rhombohedral axes have a = b = c and equal angles, hexagonal axes a = b and gamma = 120°; the unique
// axis of a monoclinic cell is the one whose angle is not 90°); otherwise the International Tables default
// setting (./space-group-table.ts `defaultSetting`) is taken, with a note. The reader may still decide from the
// atom sites (./setting-from-sites.ts) among the settings left open.
import type { CellParams } from '../types.js';
import {
  defaultSetting, OTHER_SETTINGS, settingLabel, settingsOfGroup,
  SPACE_GROUP_SETTINGS, type SpaceGroupSetting,
} from './space-group-table.js';

/** What a file says about its space group besides the symbol itself. */
export interface SettingHints {
  /** A setting code item (`_space_group_IT_coordinate_system_code`): '1', '2', 'h', 'r', 'b1', 'ba-c', '2cab'. */
  code?: string | null;
  /** `_symmetry_cell_setting` ('rhombohedral', 'hexagonal', ...); only the axes of rhombohedral groups are read from it. */
  cellSetting?: string | null;
  /** The block's cell, to decide what the symbol leaves open. */
  cell?: CellParams | null;
}

/** The setting a symbol or number names, with what the reader decided on the way. */
export interface ResolvedSetting {
  setting: SpaceGroupSetting;
  /** Every setting the spelling itself allows (before the cell and other items decided), table order, distinct operations. */
  allowed: SpaceGroupSetting[];
  /** The settings still open after the other items and the cell (one when they decided; `setting` is one of them). */
  open: SpaceGroupSetting[];
  /** When several settings stayed open: the note saying which was taken and why (not in `notes`). */
  undecided: string | null;
  notes: string[];
}

/** Angles within this many degrees count as equal (cells are written to 0.001° or coarser). */
const ANGLE_TOLERANCE_DEG = 0.01;
/** Lengths within this fraction count as equal. */
const LENGTH_TOLERANCE_FRACTION = 1e-4;

/**
 * The setting a Hermann–Mauguin symbol names (any spelling above), or null when the text names none.
 * `hints` settle what the symbol leaves open; see the file header for the rules.
 */
export function settingFromSymbol(symbol: string, hints: SettingHints = {}): ResolvedSetting | null {
  const parsed = readSpelling(symbol);
  if (parsed === null) return null;
  const shown = parsed.written;
  let candidates = lookupKey(parsed.key);
  const notes: string[] = [];
  let hexagonalLattice = false;
  if (candidates.length === 0 && parsed.key.startsWith('H')) {
    // 'H 3 2': a rhombohedral group on hexagonal axes, as some programs name it.
    candidates = lookupKey(`R${parsed.key.slice(1)}`).filter((s) => s.ext.endsWith('H'));
    hexagonalLattice = candidates.length > 0;
  }
  if (candidates.length === 0) {
    const other = OTHER_SETTINGS.filter((s) => compact(s.hm) === parsed.key || compact(withoutOnes(s.hm)) === parsed.key);
    if (other.length === 0) return null;
    const s = other[0]!;
    return {
      setting: s,
      allowed: [s],
      open: [s],
      undecided: null,
      notes: [`'${shown}' is not one of the International Tables settings; its operations come from the Hall symbol '${s.hall}' (group ${s.number})`],
    };
  }
  // The symbol's own suffix must fit it: 'P 21/c:b2' names no setting.
  for (const code of parsed.codes) {
    const filter = codeFilter(code);
    const kept = filter === null ? [] : candidates.filter(filter);
    if (kept.length === 0) return null;
    candidates = kept;
  }
  const allowedBySpelling = candidates;
  // Markers, remarks and the file's other items narrow the choice when they fit; otherwise they are reported.
  const soft: Array<[string, string]> = [
    ...parsed.markers.map((m): [string, string] => [m, `the marker '${m}' after the symbol`]),
    ...parsed.remarks.map((r): [string, string] => [r, `the remark '${r}'`]),
  ];
  candidates = applySoftHints(candidates, soft, hints, `'${shown}'`, notes);
  const { chosen, open, undecided } = decide(candidates, hints.cell ?? null, `'${shown}'`);
  if (hexagonalLattice) notes.push(`'${shown}' read as ${settingLabel(chosen)} (the H lattice letter names hexagonal axes)`);
  cellCheck(chosen, hints.cell ?? null, notes);
  return { setting: chosen, allowed: distinct(allowedBySpelling), open, undecided, notes };
}

/** The setting a group number names (1..230), or null for any other number; hints as for symbols. */
export function settingFromNumber(number: number, hints: SettingHints = {}): ResolvedSetting | null {
  if (!Number.isInteger(number) || number < 1 || number > 230) return null;
  let candidates = settingsOfGroup(number);
  const allowed = candidates;
  const notes: string[] = [];
  candidates = applySoftHints(candidates, [], hints, `group ${number}`, notes);
  const { chosen, open, undecided } = decide(candidates, hints.cell ?? null, `the space-group number ${number} alone`);
  cellCheck(chosen, hints.cell ?? null, notes);
  return { setting: chosen, allowed: distinct(allowed), open, undecided, notes };
}

/**
 * Narrow the candidates by hints that may be wrong: `soft` (text, how to name it in a note) plus the setting code and
 * cell-setting items of `hints`. A hint that fits none of the candidates, or is no code at all, is reported and ignored.
 */
function applySoftHints(
  candidates: SpaceGroupSetting[], soft: Array<[string, string]>, hints: SettingHints, what: string, notes: string[],
): SpaceGroupSetting[] {
  const all = [...soft];
  if (hints.code) all.push([hints.code, `the setting code '${hints.code}'`]);
  const cellSettingCode = hints.cellSetting ? axesFromCellSetting(hints.cellSetting) : null;
  if (cellSettingCode !== null && candidates.some((s) => /[HR]$/.test(s.ext))) {
    all.push([cellSettingCode, `_symmetry_cell_setting '${hints.cellSetting}'`]);
  }
  let left = candidates;
  for (const [text, name] of all) {
    const filter = codeFilter(remarkCode(text));
    if (filter === null) {
      notes.push(`${name} is not a setting code this reader knows; it was ignored`);
      continue;
    }
    const kept = left.filter(filter);
    if (kept.length === 0) notes.push(`${name} does not fit ${what}; it was ignored`);
    else left = kept;
  }
  return left;
}

/** The parts of a written symbol: its compact key, suffix codes, trailing markers and remarks. */
export interface SymbolSpelling {
  /** The symbol as written, without surrounding quotes and spaces. */
  written: string;
  key: string;
  codes: string[];
  markers: string[];
  remarks: string[];
}

/** Read a written symbol into a compact key ('P21/c', 'R-3c', 'Fm-3m') plus codes, markers, remarks; null when empty. */
export function readSpelling(symbol: string): SymbolSpelling | null {
  let s = symbol.trim();
  if (s.length >= 2 && (s[0] === "'" || s[0] === '"') && s[s.length - 1] === s[0]) s = s.slice(1, -1).trim();
  const written = s;
  // Typographic minus signs and combining overbars -> '-'.
  s = s.replace(/[\u2212\u2013\u2010]/g, '-').replace(/(\d)\u0305/g, '-$1');
  const remarks: string[] = [];
  s = s.replace(/\{([^}]*)\}/g, (_m, r: string) => {
    remarks.push(r.trim());
    return ' ';
  });
  // Screw axes written 2(1), 4(2), 6(3): subscripts, not remarks.
  s = s.replace(/(\d)\s*\((\d)\)/g, '$1$2');
  // Other parenthesised text with a word in it is a remark ('(origin choice 2)'); '(a)' in old names stays.
  s = s.replace(/\((\s*(?:[^)]*[A-Za-z]{2,}[^)]*|\d+)\s*)\)/g, (_m, r: string) => {
    remarks.push(r.trim());
    return ' ';
  });
  const codes: string[] = [];
  const colon = s.indexOf(':');
  if (colon >= 0) {
    codes.push(...s.slice(colon + 1).split(':').map((c) => c.trim()).filter((c) => c !== ''));
    s = s.slice(0, colon);
  }
  s = s.replace(/_/g, '');
  const markers: string[] = [];
  const tokens = s.split(/\s+/).filter((t) => t !== '');
  // A lone S, Z, H or R after a symbol of two or more parts is an origin or axes marker.
  while (tokens.length > 2 && /^[SZHRszhr]$/.test(tokens[tokens.length - 1]!)) markers.unshift(tokens.pop()!.toUpperCase());
  if (tokens.length === 0) return null;
  let key = compact(tokens.join(' '));
  if (lookupKey(key).length === 0 && /[hrsz]$/.test(key) && key.length > 2) {
    // The same markers written without a space: 'R-3cH', 'Fd-3mZ'.
    markers.unshift(key[key.length - 1]!.toUpperCase());
    key = key.slice(0, -1);
  }
  return { written, key, codes, markers, remarks };
}

/** Spaces removed, lattice letter upper case, the rest lower case: 'P 1 21/C 1' -> 'P121/c1'. */
function compact(hm: string): string {
  const s = hm.replace(/\s+/g, '');
  return s.length === 0 ? s : s[0]!.toUpperCase() + s.slice(1).toLowerCase();
}

/** Settings (table order, distinct operations) whose spellings give this key. */
function lookupKey(key: string): SpaceGroupSetting[] {
  return symbolIndex().get(key) ?? [];
}

let index: Map<string, SpaceGroupSetting[]> | null = null;

/** Compact spelling -> settings, built once from the table. */
function symbolIndex(): Map<string, SpaceGroupSetting[]> {
  if (index !== null) return index;
  const map = new Map<string, SpaceGroupSetting[]>();
  const add = (key: string, s: SpaceGroupSetting): void => {
    const list = map.get(key);
    if (list === undefined) map.set(key, [s]);
    else if (!list.includes(s)) list.push(s);
  };
  for (const s of SPACE_GROUP_SETTINGS) {
    for (const spelling of spellingsOf(s)) add(compact(spelling), s);
  }
  // Monoclinic symbols written without their 1s: unique axis b is the International Tables short symbol
  // ('P 21/c'); other unique axes get the short form only where it names no b-axis setting ('B 2/b').
  const monoclinic = SPACE_GROUP_SETTINGS.filter(isMonoclinic);
  for (const s of monoclinic) {
    const key = compact(withoutOnes(s.hm));
    const taken = map.get(key);
    if (/^-?b/.test(s.ext) || taken === undefined || !taken.some((t) => /^-?b/.test(t.ext))) add(key, s);
  }
  index = map;
  return map;
}

/** The spellings of one setting: its H-M symbol, full symbol, the old cubic form, the 'e' glide form. */
function spellingsOf(s: SpaceGroupSetting): string[] {
  const out = [s.hm, s.full, s.short];
  // Before 1983 the cubic groups with a centre of inversion were written without the bar: 'F m 3 m', 'P a 3'.
  for (const sym of [s.hm, s.full]) {
    const parts = sym.split(' ');
    if (s.number >= 200 && parts[2] === '-3') out.push([parts[0], parts[1], '3', ...parts.slice(3)].join(' '));
  }
  // International Tables (2002) name the double glide plane 'e' in groups 39, 41, 64, 67 and 68: it is the plane
  // normal to the axis the centring vector is perpendicular to (A: first place, B: second, C: third).
  if ([39, 41, 64, 67, 68].includes(s.number)) {
    for (const sym of [s.hm, s.full]) {
      const parts = sym.split(' ');
      const place = ' ABC'.indexOf(parts[0]!);
      const p = parts[place];
      if (place > 0 && p !== undefined && /[abc]$/.test(p)) {
        parts[place] = `${p.slice(0, -1)}e`;
        out.push(parts.join(' '));
      }
    }
  }
  return out;
}

/** A monoclinic symbol without its 1s: 'P 1 21/c 1' -> 'P 21/c'. */
function withoutOnes(hm: string): string {
  return hm.split(' ').filter((p, i) => i === 0 || p !== '1').join(' ');
}

function isMonoclinic(s: SpaceGroupSetting): boolean {
  return s.number >= 3 && s.number <= 15;
}

/** A code as written ('1', ' H', 'b1', 'ba-c', '2cab', 'abc', 'origin choice 2', 'rhombohedral axes') -> canonical, or the text lower-cased. */
function remarkCode(text: string): string {
  const t = text.trim().toLowerCase();
  if (/rhombohedral/.test(t)) return 'r';
  if (/hexagonal/.test(t)) return 'h';
  const origin = /origin(?:\s+choice)?\s*(?:no\.?\s*)?([12])/.exec(t);
  if (origin !== null) return origin[1]!;
  if (t === 's') return '1';
  if (t === 'z') return '2';
  const unique = /unique\s+axis\s+([abc])/.exec(t);
  if (unique !== null) {
    const cellChoice = /cell\s+choice\s+([123])/.exec(t);
    return `${unique[1]}${cellChoice?.[1] ?? ''}`;
  }
  return t;
}

/** A filter on settings for a canonical code, or null when the code is not one. */
function codeFilter(code: string): ((s: SpaceGroupSetting) => boolean) | null {
  const c = code.trim().toLowerCase();
  if (c === 'h' || c === 'r') {
    const axes = c.toUpperCase();
    return (s) => s.ext.endsWith(axes);
  }
  const perm = /^([12])?(abc|ba-c|cab|-cba|bca|a-cb)?$/.exec(c);
  if (perm !== null && c !== '') {
    const origin = perm[1];
    const axes = perm[2] === 'abc' ? '' : perm[2];
    return (s) => {
      const sOrigin = /^[12]/.test(s.ext) ? s.ext[0] : undefined;
      const sAxes = s.ext.replace(/^[12]/, '');
      if (origin !== undefined && sOrigin !== origin) return false;
      if (axes !== undefined && (isMonoclinic(s) || sAxes.replace(/[HR]$/, '') !== axes)) return false;
      return true;
    };
  }
  const mono = /^(-?)([abc])([123]?)$/.exec(c);
  if (mono !== null) {
    return (s) => {
      if (!isMonoclinic(s)) return false;
      if (mono[3] === '') return s.ext.replace(/^-/, '').startsWith(mono[2]!) && (mono[1] === '' || s.ext.startsWith('-'));
      return s.ext === c || (mono[1] === '' && s.ext === `${mono[2]}`);
    };
  }
  return null;
}

/** `_symmetry_cell_setting` -> an axes code for rhombohedral groups, or null when it says nothing about axes. */
function axesFromCellSetting(text: string): string | null {
  const t = text.trim().toLowerCase();
  if (t.startsWith('rhombohedral')) return 'r';
  if (t.startsWith('hexagonal')) return 'h';
  return null;
}

/** Pick one of the settings left: the cell decides where it can, else the default (or the first), with the note that says so. */
function decide(
  candidates: SpaceGroupSetting[], cell: CellParams | null, what: string,
): { chosen: SpaceGroupSetting; open: SpaceGroupSetting[]; undecided: string | null } {
  let left = distinct(candidates);
  if (left.length > 1 && cell !== null) {
    const fits = left.filter((s) => cellFits(s, cell) === true);
    if (fits.length > 0) left = fits;
  }
  if (left.length === 1) return { chosen: left[0]!, open: left, undecided: null };
  const def = defaultSetting(left[0]!.number);
  // Not the default itself (another axis setting): origin choice 2 and hexagonal axes, as in the default.
  const likeDefault = left.find((s) => /^2|H$/.test(s.ext));
  const chosen = left.includes(def) ? def : likeDefault ?? left[0]!;
  const others = left.filter((s) => s !== chosen).map((s) => `'${settingLabel(s)}'`);
  const why =
    chosen === def ? 'the International Tables default' : chosen === likeDefault ? 'origin and axes as in the International Tables default' : 'the first International Tables lists';
  const undecided =
    `${what} does not say which of ${left.length} settings is meant and neither the cell nor the atom sites decide: ` +
    `took '${settingLabel(chosen)}' (Hall '${chosen.hall}'), ${why}; the others are ${others.join(', ')}`;
  return { chosen, open: left, undecided };
}

/**
 * Settings with different operations only. Among the 530, only group 68 names one operation set twice, and
 * then with one Hall symbol for both names (test/geometry-space-group-table.test.ts checks this), so equal Hall
 * symbols mean equal operations.
 */
function distinct(settings: SpaceGroupSetting[]): SpaceGroupSetting[] {
  const out: SpaceGroupSetting[] = [];
  for (const s of settings) if (!out.some((o) => o.hall === s.hall)) out.push(s);
  return out;
}

/**
 * Whether a cell has the shape a setting needs, where the setting's axes or unique axis show in the shape:
 * true or false for rhombohedral groups (hexagonal or rhombohedral axes) and monoclinic ones (unique axis),
 * null for other settings (the shape does not tell them apart).
 */
function cellFits(s: SpaceGroupSetting, cell: CellParams): boolean | null {
  if (/[HR]$/.test(s.ext)) return s.ext.endsWith('R') ? isRhombohedralCell(cell) : isHexagonalCell(cell);
  if (isMonoclinic(s)) {
    const axis = /^-?([abc])/.exec(s.ext)?.[1];
    const oblique = obliqueAxis(cell);
    return axis === undefined || oblique === null ? null : axis === oblique;
  }
  return null;
}

/** After the choice, say when the cell plainly does not have the shape the chosen setting needs. */
function cellCheck(s: SpaceGroupSetting, cell: CellParams | null, notes: string[]): void {
  if (cell === null || cellFits(s, cell) !== false) return;
  if (/[HR]$/.test(s.ext)) {
    notes.push(
      `'${settingLabel(s)}' is on ${s.ext.endsWith('R') ? 'rhombohedral' : 'hexagonal'} axes but the cell does not have that shape ` +
        `(${s.ext.endsWith('R') ? 'a = b = c and alpha = beta = gamma' : 'a = b, alpha = beta = 90° and gamma = 120°'})`,
    );
  } else {
    notes.push(`'${settingLabel(s)}' has unique axis ${/^-?([abc])/.exec(s.ext)![1]} but the cell's angle that is not 90° belongs to axis ${obliqueAxis(cell)}`);
  }
}

/**
 * What the decisions above read from a cell, as a short key: equal keys give equal settings and notes, so callers
 * may cache a lookup by symbol and this key.
 */
export function cellShapeKey(cell: CellParams | null): string {
  if (cell === null) return '';
  return `${isRhombohedralCell(cell) ? 'r' : ''}${isHexagonalCell(cell) ? 'h' : ''}${obliqueAxis(cell) ?? ''}`;
}

function near(x: number, y: number, tol: number): boolean {
  return Math.abs(x - y) <= tol;
}

function equalLengths(x: number, y: number): boolean {
  return Math.abs(x - y) <= LENGTH_TOLERANCE_FRACTION * Math.max(x, y);
}

/** a = b = c and alpha = beta = gamma (rhombohedral axes). */
function isRhombohedralCell(c: CellParams): boolean {
  return (
    equalLengths(c.a, c.b) && equalLengths(c.b, c.c) &&
    near(c.alpha, c.beta, ANGLE_TOLERANCE_DEG) && near(c.beta, c.gamma, ANGLE_TOLERANCE_DEG)
  );
}

/** a = b, alpha = beta = 90° and gamma = 120° (hexagonal axes). */
function isHexagonalCell(c: CellParams): boolean {
  return (
    equalLengths(c.a, c.b) && near(c.alpha, 90, ANGLE_TOLERANCE_DEG) && near(c.beta, 90, ANGLE_TOLERANCE_DEG) &&
    near(c.gamma, 120, ANGLE_TOLERANCE_DEG)
  );
}

/** The one axis whose angle is not 90° (the others are), or null. */
function obliqueAxis(c: CellParams): 'a' | 'b' | 'c' | null {
  const off = [c.alpha, c.beta, c.gamma].map((g) => !near(g, 90, ANGLE_TOLERANCE_DEG));
  if (off.filter(Boolean).length !== 1) return null;
  return off[0] ? 'a' : off[1] ? 'b' : 'c';
}
