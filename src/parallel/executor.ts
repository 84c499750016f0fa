// Where a stage's heavy jobs run. A stage cuts its work into jobs (a chunk of blocks, a chunk of queries) and
// hands them to an Executor by task name; it does not know whether they run in local worker threads (the default,
// `localExecutor`, no server needed) or as jobs on a Redis queue served by `polysift worker` processes on other
// machines (src/queue/queue-executor.ts, loaded only when the user asks for a queue). Results come back in job
// order either way, and the same job gives the same numbers wherever it ran.
import { defaultThreads, mapInWorkers } from './pool.js';

/**
 * The tasks a job may name: task -> module (relative to src/) and export. A queue worker runs only these, so a
 * job taken from a shared queue can never make it import anything else.
 */
export const TASKS = {
  /** Chunk of blocks -> periodic sets, crystal facts, PDD and AMD (src/landscape/blocks-job.ts). */
  blocks: { module: 'landscape/blocks-job', fn: 'blocksJob' },
} as const;

export type TaskName = keyof typeof TASKS;

export interface ExecutorRun<O> {
  /** Called as jobs finish: (jobs done, jobs in total). */
  onProgress?: (done: number, total: number) => void;
  /** Called with each job's result as soon as it is in (in any order); lets a stage keep what finished if a later job fails. */
  onResult?: (index: number, result: O) => void;
}

export interface Executor {
  /** 'local' (worker threads) or 'queue' (jobs on a Redis queue). */
  readonly kind: 'local' | 'queue';
  /** Run `task` on every input; the results in input order. Rejects when a job fails or the queue is lost. */
  map<I, O>(task: TaskName, inputs: readonly I[], run?: ExecutorRun<O>): Promise<O[]>;
  /** Release threads or connections. */
  close(): Promise<void>;
}

/** URL of a task's module, .ts under the test runner and .js when built. */
export function taskModuleUrl(task: TaskName): string {
  const spec = TASKS[task];
  if (!spec) throw new Error(`unknown task '${String(task)}'`);
  const ext = import.meta.url.endsWith('.ts') ? '.ts' : '.js';
  return new URL(`../${spec.module}${ext}`, import.meta.url).href;
}

/** Jobs in worker threads of this machine (`threads` = 1 runs them on the calling thread). */
export function localExecutor(threads = defaultThreads()): Executor {
  return {
    kind: 'local',
    map<I, O>(task: TaskName, inputs: readonly I[], run: ExecutorRun<O> = {}): Promise<O[]> {
      return mapInWorkers<I, O>(taskModuleUrl(task), TASKS[task].fn, inputs, { threads, onProgress: run.onProgress, onResult: run.onResult });
    },
    async close() {},
  };
}
