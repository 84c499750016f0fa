// Options that several commands share, declared once so that each has one name, one placeholder and one help line
// everywhere (`-k, --pdd-depth`, `--tolerance`, `--hydrogens`, `--threads`, `--json`, `--quiet`, `--title`), and the
// parsers that turn their text into values with one kind of error message. A command adds its own options beside
// these; help lines start with a lower-case noun or verb; a fixed default is given to commander (which prints it as
// `(default: "100")`), a default that depends on the inputs is written in the help line as `(default: ...)`.
import { Option, type Command } from 'commander';
import type { HydrogenPolicy } from '../landscape/schema.js';
import { DEFAULT_K } from '../landscape/sift.js';
import { DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM } from '../geometry/detect-symmetry.js';

/** The project-wide default PDD depth (the library's, src/landscape/sift.ts). */
export const DEFAULT_PDD_DEPTH = DEFAULT_K;

/** `-k, --pdd-depth <n>`: read as `pddDepth`. */
export function addPddDepth(cmd: Command, what = 'neighbours per PDD row (k)'): Command {
  return cmd.option('-k, --pdd-depth <n>', what, String(DEFAULT_PDD_DEPTH));
}

/**
 * `--tolerance <angstrom>`: in every command the EMD in Å within which two structures count as the same crystal
 * (`meaning` says for what); read as `tolerance`, undefined when not given (`defaultText` says what is used then).
 */
export function addTolerance(cmd: Command, meaning: string, defaultText: string): Command {
  return cmd.option('--tolerance <angstrom>', `${meaning} (default: ${defaultText})`);
}

/** `--symmetry-tolerance <angstrom>`: read as `symmetryTolerance`. */
export function addSymmetryTolerance(cmd: Command): Command {
  return cmd.option(
    '--symmetry-tolerance <angstrom>',
    "distance in Å within which atoms must map onto atoms for a symmetry operation to count (space group and Z' reported)",
    String(DEFAULT_SYMMETRY_TOLERANCE_ANGSTROM),
  );
}

/** The --symmetry-tolerance value: a positive distance in Å, at most 1 Å (beyond that any molecular crystal looks symmetric). */
export function parseSymmetryTolerance(value: string): number {
  const v = Number(value);
  if (!/^\s*[0-9.eE+-]+\s*$/.test(value) || !Number.isFinite(v) || v <= 0 || v > 1) {
    throw new Error(`--symmetry-tolerance must be a distance in Å above 0 and at most 1, not '${value}'`);
  }
  return v;
}

/** `--hydrogens <keep|drop>` with a fixed default, or (`derivedDefault` text) one that depends on the inputs. */
export function addHydrogens(cmd: Command, fixedDefault: HydrogenPolicy | null, derivedDefault = ''): Command {
  const help = 'keep or drop hydrogen (and deuterium) atoms in the comparison';
  return fixedDefault === null ? cmd.option('--hydrogens <keep|drop>', `${help} (default: ${derivedDefault})`) : cmd.option('--hydrogens <keep|drop>', help, fixedDefault);
}

/** `--threads <n>`; read as `threads`. */
export function addThreads(cmd: Command): Command {
  return cmd.option('--threads <n>', 'worker threads (default: available cores)');
}

/** `--json`, `--quiet`: machine output on stdout, or nothing but errors. */
export function addOutputModes(cmd: Command, json: string): Command {
  return addQuiet(cmd.option('--json', `print ${json} as JSON on stdout`));
}

/** `--quiet` alone, for a command with no JSON output. */
export function addQuiet(cmd: Command): Command {
  return cmd.option('--quiet', 'print nothing but errors (no progress, no summary)');
}

/** `--title <text>`. */
export function addTitle(cmd: Command): Command {
  return cmd.option('--title <text>', 'title of report.html');
}

/** An old spelling of an option, still read but not shown in the help. */
export function addHiddenAlias(cmd: Command, flags: string): Command {
  return cmd.addOption(new Option(flags).hideHelp());
}

/** A whole number >= min given to option `name`. */
export function parseWhole(text: string, name: string, min: number): number {
  const v = Number(text);
  if (!/^\s*\d+\s*$/.test(text) || v < min) throw new Error(`${name} must be a whole number >= ${min}, not '${text}'`);
  return v;
}

/** A finite number >= min given to option `name` (a distance in Å, a ratio, ...). */
export function parseDecimal(text: string, name: string, min = 0): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v < min) throw new Error(`${name} must be a number >= ${min}, not '${text}'`);
  return v;
}

export function parseHydrogens(text: string): HydrogenPolicy {
  if (text === 'keep' || text === 'drop') return text;
  throw new Error(`--hydrogens must be keep or drop, not '${text}'`);
}

/** `--threads` as given, or undefined for the default. */
export function parseThreads(text: string | undefined): number | undefined {
  return text === undefined ? undefined : parseWhole(text, '--threads', 1);
}

/** A number of seconds > 0 (decimals allowed) given to option `name`. */
export function parseSeconds(text: string, name: string): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v <= 0) throw new Error(`${name} must be a number of seconds > 0, not '${text}'`);
  return v;
}
