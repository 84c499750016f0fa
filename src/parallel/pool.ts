// A small worker-thread pool: runs a named export of a module on many inputs across threads.
// Callers pass chunks of work (not single points) so that message passing stays cheap.
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

export interface PoolOptions {
  /** Number of worker threads; 1 runs everything on the calling thread. Default: available cores. */
  threads?: number;
  /** Called after each input finishes, with the count done so far. */
  onProgress?: (done: number, total: number) => void;
}

/** Default thread count: the machine's available parallelism. */
export function defaultThreads(): number {
  return Math.max(1, availableParallelism());
}

/**
 * Apply `moduleUrl`'s export `fnName` (a function of one structured-cloneable argument) to every input,
 * in worker threads, and return the results in input order.
 * `moduleUrl` is usually `new URL('./some-module.js', import.meta.url).href` from the caller.
 */
export async function mapInWorkers<I, O>(
  moduleUrl: string,
  fnName: string,
  inputs: readonly I[],
  options: PoolOptions = {},
): Promise<O[]> {
  const threads = Math.max(1, Math.min(options.threads ?? defaultThreads(), inputs.length));
  const results = new Array<O>(inputs.length);
  if (inputs.length === 0) return results;
  if (threads === 1) {
    const mod = (await import(moduleUrl)) as Record<string, (input: I) => O | Promise<O>>;
    const fn = mod[fnName];
    if (typeof fn !== 'function') throw new Error(`${moduleUrl} has no export named ${fnName}`);
    for (let i = 0; i < inputs.length; i++) {
      results[i] = await fn(inputs[i]);
      options.onProgress?.(i + 1, inputs.length);
    }
    return results;
  }

  const workers: Worker[] = [];
  let next = 0;
  let done = 0;
  try {
    await new Promise<void>((resolve, reject) => {
      let failed = false;
      const feed = (w: Worker) => {
        if (failed) return;
        if (next >= inputs.length) {
          if (done === inputs.length) resolve();
          return;
        }
        const id = next++;
        w.postMessage({ id, moduleUrl, fnName, input: inputs[id] });
      };
      for (let t = 0; t < threads; t++) {
        const w = startWorker();
        workers.push(w);
        w.on('message', (msg: { id: number; result?: O; error?: string }) => {
          if (msg.error !== undefined) {
            failed = true;
            reject(new Error(msg.error));
            return;
          }
          results[msg.id] = msg.result as O;
          done++;
          options.onProgress?.(done, inputs.length);
          if (done === inputs.length) resolve();
          else feed(w);
        });
        w.on('error', (err) => {
          failed = true;
          reject(err);
        });
        feed(w);
      }
    });
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
  return results;
}

/**
 * Start one worker. Built code runs worker.js directly; under the test runner the sources are
 * TypeScript, so the worker first registers the tsx loader (a dev dependency) and then imports worker.ts.
 */
function startWorker(): Worker {
  if (!import.meta.url.endsWith('.ts')) return new Worker(fileURLToPath(new URL('./worker.js', import.meta.url)));
  const tsxRoot = dirname(createRequire(import.meta.url).resolve('tsx/package.json'));
  const tsxApi = pathToFileURL(join(tsxRoot, 'dist/esm/api/index.mjs')).href;
  const entry = new URL('./worker.ts', import.meta.url).href;
  const boot = `import(${JSON.stringify(tsxApi)}).then((m) => { m.register(); return import(${JSON.stringify(entry)}); });`;
  return new Worker(boot, { eval: true });
}

/** Split `n` items into about `parts` contiguous [start, end) ranges of similar size. */
export function chunkRanges(n: number, parts: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  const p = Math.max(1, Math.min(parts, n));
  for (let i = 0; i < p; i++) {
    const start = Math.floor((i * n) / p);
    const end = Math.floor(((i + 1) * n) / p);
    if (end > start) out.push([start, end]);
  }
  return out;
}
