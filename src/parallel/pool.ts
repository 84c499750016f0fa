// A small worker-thread pool: runs a named export of a module on many inputs across threads.
// Callers pass chunks of work (not single points) so that message passing stays cheap.
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

export interface PoolOptions<O = unknown> {
  /** Number of worker threads; 1 runs everything on the calling thread. Default: available cores. */
  threads?: number;
  /** Called after each input finishes, with the count done so far. */
  onProgress?: (done: number, total: number) => void;
  /** Called with each result as soon as it is in (results may arrive out of input order). */
  onResult?: (index: number, result: O) => void;
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
  options: PoolOptions<O> = {},
): Promise<O[]> {
  const threads = Math.max(1, Math.min(options.threads ?? defaultThreads(), inputs.length));
  const results = new Array<O>(inputs.length);
  if (inputs.length === 0) return results;
  let done = 0;
  const finish = (i: number, out: O) => {
    results[i] = out;
    done++;
    options.onResult?.(i, out);
    options.onProgress?.(done, inputs.length);
  };
  if (threads === 1) {
    const fn = await loadExport<I, O>(moduleUrl, fnName);
    for (let i = 0; i < inputs.length; i++) finish(i, await fn(inputs[i]));
    return results;
  }
  const pool = startThreadPool(threads);
  try {
    // The pool runs the inputs in order, one per free thread; the first failure ends the call.
    await Promise.all(inputs.map((input, i) => pool.run<I, O>(moduleUrl, fnName, input).then((out) => finish(i, out))));
  } finally {
    await pool.close();
  }
  return results;
}

/** Import `fnName` from `moduleUrl` on the calling thread. */
export async function loadExport<I, O>(moduleUrl: string, fnName: string): Promise<(input: I) => O | Promise<O>> {
  const mod = (await import(moduleUrl)) as Record<string, (input: I) => O | Promise<O>>;
  const fn = mod[fnName];
  if (typeof fn !== 'function') throw new Error(`${moduleUrl} has no export named ${fnName}`);
  return fn;
}

/** Long-lived worker threads that run one call at a time each, in the order the calls were made. */
export interface ThreadPool {
  readonly threads: number;
  /** Run `moduleUrl`'s export `fnName` on `input` in the next free thread. */
  run<I, O>(moduleUrl: string, fnName: string, input: I): Promise<O>;
  /** Stop every thread; calls still waiting or running are rejected. */
  close(): Promise<void>;
}

interface PoolCall {
  moduleUrl: string;
  fnName: string;
  input: unknown;
  resolve: (out: unknown) => void;
  reject: (err: Error) => void;
}

/**
 * Start `threads` worker threads that stay up between calls (the queue worker runs one job after another on them,
 * so its own event loop stays free to keep the queue's job locks alive). A thread that dies fails its call and is
 * replaced by a fresh one.
 */
export function startThreadPool(threads: number): ThreadPool {
  const waiting: PoolCall[] = [];
  const idle: Worker[] = [];
  const busy = new Map<Worker, PoolCall>();
  let closed = false;
  let nextId = 0;

  const dispatch = () => {
    while (!closed && waiting.length > 0) {
      let w = idle.pop();
      if (!w) {
        if (busy.size + idle.length >= threads) return;
        w = spawn();
      }
      const call = waiting.shift()!;
      busy.set(w, call);
      w.postMessage({ id: nextId++, moduleUrl: call.moduleUrl, fnName: call.fnName, input: call.input });
    }
  };
  const release = (w: Worker, fail: Error | null, result?: unknown) => {
    const call = busy.get(w);
    busy.delete(w);
    if (call) {
      if (fail) call.reject(fail);
      else call.resolve(result);
    }
  };
  const spawn = (): Worker => {
    const w = startWorker();
    w.on('message', (msg: { id: number; result?: unknown; error?: string }) => {
      release(w, msg.error !== undefined ? new Error(msg.error) : null, msg.result);
      if (!closed) {
        idle.push(w);
        dispatch();
      }
    });
    const lost = (err: Error) => {
      if (closed) return;
      const at = idle.indexOf(w);
      if (at >= 0) idle.splice(at, 1);
      if (!busy.has(w)) return;
      release(w, err);
      void w.terminate();
      dispatch();
    };
    w.on('error', lost);
    w.on('exit', (code) => lost(new Error(`a worker thread stopped (exit code ${code})`)));
    return w;
  };

  return {
    threads,
    run<I, O>(moduleUrl: string, fnName: string, input: I): Promise<O> {
      if (closed) return Promise.reject(new Error('the thread pool is closed'));
      return new Promise<O>((resolve, reject) => {
        waiting.push({ moduleUrl, fnName, input, resolve: resolve as (out: unknown) => void, reject });
        dispatch();
      });
    },
    async close() {
      if (closed) return;
      closed = true;
      const err = new Error('the thread pool was closed before the call finished');
      for (const call of waiting.splice(0)) call.reject(err);
      const all = [...idle.splice(0), ...busy.keys()];
      for (const call of busy.values()) call.reject(err);
      busy.clear();
      await Promise.all(all.map((w) => w.terminate()));
    },
  };
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
