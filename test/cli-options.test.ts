// One name per option across commands (issue 13): the tolerance is `--tolerance` in sift, diff and locate; every
// command that takes the PDD depth has `-k` and `--pdd-depth`; options shared by several commands have the same help
// line everywhere; help lines start alike (a lower-case word or an acronym such as EMD or CSV, no trailing full stop). Read from the commander program
// itself (src/program.ts), without running a command.
import { describe, expect, it } from 'vitest';
import type { Command, Option } from 'commander';
import { buildProgram } from '../src/program.js';

const program = buildProgram();
const commands = new Map(program.commands.map((c) => [c.name(), c] as const));
/** Options a user sees in the help (hidden spellings left out). */
const shown = (c: Command): Option[] => c.options.filter((o) => !o.hidden);
const option = (c: Command, long: string) => c.options.find((o) => o.long === long);

describe('command-line options', () => {
  it('call the tolerance --tolerance in sift, diff and locate, an EMD in Å in each', () => {
    for (const name of ['sift', 'diff', 'locate']) {
      const o = option(commands.get(name)!, '--tolerance');
      expect(o?.flags, name).toBe('--tolerance <angstrom>');
      expect(o!.description, name).toMatch(/^EMD in Å within which /);
    }
    // The old spelling of sift's tolerance is still read, but not shown.
    const old = option(commands.get('sift')!, '--duplicate-tolerance');
    expect(old?.hidden).toBe(true);
    for (const c of commands.values()) expect(shown(c).some((o) => o.long === '--duplicate-tolerance')).toBe(false);
  });

  it('give every command that takes k both -k and --pdd-depth', () => {
    const withK = [...commands.values()].filter((c) => c.options.some((o) => o.short === '-k' || o.long === '--pdd-depth'));
    expect(withK.map((c) => c.name()).sort()).toEqual(['distance', 'inspect', 'sift']);
    for (const c of withK) expect(option(c, '--pdd-depth')?.flags).toBe('-k, --pdd-depth <n>');
  });

  it('give shared options one help line in every command', () => {
    for (const long of ['--threads', '--quiet', '--title', '--hydrogens']) {
      const lines = new Set<string>();
      for (const c of commands.values()) {
        const o = option(c, long);
        if (o) lines.add(`${o.flags}: ${o.description.replace(/ \(default: .*\)$/, '')}`);
      }
      expect(lines.size, `${long}: ${[...lines].join(' / ')}`).toBe(1);
    }
    for (const c of commands.values()) {
      const json = option(c, '--json');
      if (json) expect(json.description, c.name()).toMatch(/^print .* as JSON on stdout$/);
    }
  });

  it('start every help line alike: a lower-case word (or an acronym of the trade), no full stop at the end', () => {
    for (const c of commands.values()) {
      for (const o of shown(c)) {
        expect(o.description, `${c.name()} ${o.flags}`).toMatch(/^([a-z-]|[A-Z]{2,}\b)/);
        expect(o.description.endsWith('.'), `${c.name()} ${o.flags}`).toBe(false);
      }
    }
  });
});
