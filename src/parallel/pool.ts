// A small worker-thread pool: runs a named export of a module on many inputs across threads.
// Callers pass chunks of work (not single points) so that message passing stays cheap.
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { describeLargeViews } from './large-views.js';

export interface PoolOptions {
  /** Number of worker threads; 1 runs everything on the calling thread. Default: available cores. */
  threads?: number;
  /** Called after each input finishes, with the count done so far. */
  onProgress?: (done: number, total: number) => void;
  /** An open pool to run on (its thread count wins); default: a pool started for this call and closed after it. */
  pool?: WorkerPool;
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
  if (options.pool) return options.pool.map<I, O>(moduleUrl, fnName, inputs, options.onProgress);
  const pool = new WorkerPool(Math.max(1, Math.min(options.threads ?? defaultThreads(), inputs.length)));
  try {
    return await pool.map<I, O>(moduleUrl, fnName, inputs, options.onProgress);
  } finally {
    await pool.close();
  }
}

interface Job {
  moduleUrl: string;
  fnName: string;
  input: unknown;
  done: (result: unknown) => void;
  fail: (err: Error) => void;
}

/**
 * Worker threads kept for many calls (a run of sift starts them once). Work from several `map` calls at once is
 * queued and served in order by whichever thread is free. With one thread everything runs on the calling thread.
 */
export class WorkerPool {
  readonly threads: number;
  private workers: Worker[] = [];
  private idle: Worker[] = [];
  private queue: Job[] = [];
  private running = new Map<Worker, Job>();
  private broken: Error | null = null;

  constructor(threads: number) {
    this.threads = Math.max(1, Math.floor(threads));
  }

  async map<I, O>(moduleUrl: string, fnName: string, inputs: readonly I[], onProgress?: (done: number, total: number) => void): Promise<O[]> {
    const results = new Array<O>(inputs.length);
    if (inputs.length === 0) return results;
    if (this.threads === 1) {
      const mod = (await import(moduleUrl)) as Record<string, (input: I) => O | Promise<O>>;
      const fn = mod[fnName];
      if (typeof fn !== 'function') throw new Error(`${moduleUrl} has no export named ${fnName}`);
      for (let i = 0; i < inputs.length; i++) {
        results[i] = await fn(inputs[i]);
        onProgress?.(i + 1, inputs.length);
      }
      return results;
    }
    if (this.broken) throw this.broken;
    let done = 0;
    await new Promise<void>((resolve, reject) => {
      let failed = false;
      inputs.forEach((input, id) => {
        this.queue.push({
          moduleUrl,
          fnName,
          input,
          done: (result) => {
            if (failed) return;
            results[id] = result as O;
            done++;
            onProgress?.(done, inputs.length);
            if (done === inputs.length) resolve();
          },
          fail: (err) => {
            if (failed) return;
            failed = true;
            reject(err);
          },
        });
      });
      this.start(Math.min(this.threads, this.workers.length + this.queue.length));
      this.feed();
    });
    return results;
  }

  /** Stop every thread; queued work fails. */
  async close(): Promise<void> {
    const err = new Error('the worker pool was closed');
    for (const job of this.queue) job.fail(err);
    this.queue = [];
    await Promise.all(this.workers.map((w) => w.terminate()));
    this.workers = [];
    this.idle = [];
  }

  private start(count: number): void {
    while (this.workers.length < count) {
      const w = startWorker();
      this.workers.push(w);
      this.idle.push(w);
      w.on('message', (msg: { result?: unknown; error?: string }) => {
        const job = this.running.get(w);
        this.running.delete(w);
        this.idle.push(w);
        if (job) {
          if (msg.error !== undefined) job.fail(new Error(msg.error));
          else job.done(msg.result);
        }
        this.feed();
      });
      w.on('error', (err) => {
        // A thread that died takes its job down with it; the pool refuses further work.
        this.broken = err instanceof Error ? err : new Error(String(err));
        const job = this.running.get(w);
        this.running.delete(w);
        job?.fail(this.broken);
        for (const j of this.queue) j.fail(this.broken);
        this.queue = [];
      });
    }
  }

  private feed(): void {
    while (this.idle.length > 0 && this.queue.length > 0) {
      const w = this.idle.pop()!;
      const job = this.queue.shift()!;
      this.running.set(w, job);
      w.postMessage({ moduleUrl: job.moduleUrl, fnName: job.fnName, input: describeLargeViews(job.input) });
    }
  }
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
