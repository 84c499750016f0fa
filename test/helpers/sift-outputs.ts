// The outputs of a sift that must be byte-identical between runs on the same inputs and options (project rule:
// only landscape.json's `run` field may differ), read from a run in memory or from an output folder.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { siftFiles } from '../../src/landscape/sift-files.js';
import type { SiftRun } from '../../src/landscape/sift.js';

export const COMPARED_FILES = ['structures.csv', 'unique.csv', 'unique.cif', 'convergence.csv', 'landscape.json'] as const;

/** The compared files of a run, landscape.json without its `run` field. */
export function outputsOf(run: SiftRun): Record<string, string> {
  const files = new Map(siftFiles(run, { report: false }));
  return normalise((name) => files.get(name)!);
}

/** The compared files of an output folder, landscape.json without its `run` field. */
export function outputsIn(dir: string): Record<string, string> {
  return normalise((name) => readFileSync(join(dir, name), 'utf8'));
}

function normalise(read: (name: string) => string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const name of COMPARED_FILES) {
    const text = read(name);
    if (name === 'landscape.json') {
      const l = JSON.parse(text) as Record<string, unknown>;
      if (typeof l.run !== 'object' || l.run === null) throw new Error('landscape.json has no run field');
      delete l.run;
      out[name] = JSON.stringify(l);
    } else out[name] = text;
  }
  return out;
}
