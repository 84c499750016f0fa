// Without --queue nothing needs a server (issue 15): the command line and the library entry point reach bullmq
// and ioredis only through dynamic import(), so a local sift never loads them. Checked on the source: every module
// reachable from src/cli.ts and src/index.ts through static (non-type) imports is listed, and none of them imports
// the queue packages; the queue modules themselves do (so the check looks at the right thing).
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';

const QUEUE_PACKAGES = ['bullmq', 'ioredis'];

/** Specifiers of a module's static imports and re-exports that stay in the emitted JavaScript. */
function staticImports(source: string): string[] {
  const out: string[] = [];
  const re = /^\s*(import|export)\s+(?!type\s)([^'";]*?\sfrom\s+)?['"]([^'"]+)['"]/gm;
  for (let m = re.exec(source); m !== null; m = re.exec(source)) out.push(m[3]);
  return out;
}

function reachable(entries: string[]): Map<string, string[]> {
  const seen = new Map<string, string[]>();
  const todo = entries.map((e) => resolve(e));
  while (todo.length > 0) {
    const file = todo.pop()!;
    if (seen.has(file)) continue;
    const specs = staticImports(readFileSync(file, 'utf8'));
    seen.set(file, specs);
    for (const spec of specs) if (spec.startsWith('.')) todo.push(join(dirname(file), spec.replace(/\.js$/, '.ts')));
  }
  return seen;
}

describe('the queue code stays unloaded without --queue', () => {
  it('is reached from the command line and the library only through dynamic import()', () => {
    const graph = reachable(['src/cli.ts', 'src/index.ts']);
    expect(graph.size).toBeGreaterThan(50);
    const offenders = [...graph].filter(([, specs]) => specs.some((s) => QUEUE_PACKAGES.includes(s))).map(([f]) => f);
    expect(offenders).toEqual([]);
    // The sift stages are reached (so the walk follows the pipeline) ...
    expect([...graph.keys()].some((f) => f.endsWith(join('src', 'landscape', 'stages', 'periodic-sets.ts')))).toBe(true);
    // ... and the modules that do talk to Redis import the packages statically, which the walk would have caught.
    const queueSide = reachable(['src/queue/queue-executor.ts', 'src/queue/queue-worker.ts']);
    const users = [...queueSide].filter(([, specs]) => specs.some((s) => QUEUE_PACKAGES.includes(s))).map(([f]) => f.split(/[\\/]/).pop());
    expect(users.sort()).toEqual(['queue-executor.ts', 'queue-worker.ts', 'redis.ts']);
  });
});
