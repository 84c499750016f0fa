// What the sift side and the workers agree on: the queue's name, the Redis keys of one sift, and a job's data.
// Every key and job id of a sift starts with its sift id (random, 64 bits), so the jobs and results of two sifts on
// one queue never mix. Results are stored by the worker under (sift, round, job) with HSETNX: a job run twice
// (a worker killed after storing, a lock that expired while a slow worker still ran) writes once, and the sift
// takes each job's result once.
import type { TaskName } from '../parallel/executor.js';

/** The BullMQ queue every polysift sift and worker uses. */
export const QUEUE_NAME = 'polysift';

/** Seconds a worker may go silent (no lock renewal) before its job goes to another worker (--stall-seconds). */
export const DEFAULT_STALL_SECONDS = 30;
/** Times a job may lose its worker before it counts as failed (a job that kills every worker is not retried for ever). */
export const MAX_STALLS = 5;
/** A sift refreshes its liveness key this often (ms) and the key lives this long (ms); workers skip jobs of sifts gone. */
export const ALIVE_REFRESH_MS = 5_000;
export const ALIVE_TTL_MS = 60_000;
/** Stored results of a sift that stopped without collecting them expire after a day. */
export const RESULT_TTL_MS = 24 * 3600 * 1000;
/** Workers announce themselves this often (ms) in the workers hash; an entry older than three periods is stale. */
export const WORKER_REFRESH_MS = 5_000;

/** The data of one job. `input` is the task's input, encoded by src/parallel/codec.ts. */
export interface JobData {
  sift: string;
  round: number;
  index: number;
  task: TaskName;
  /** polysift version of the sift; a worker of another version refuses the job (the numbers must match). */
  version: string;
  input: string;
}

/** What a worker stores per job: the task's output (encoded), or why the task failed. */
export type JobOutcome = { ok: unknown } | { error: string };

export const keys = {
  /** Exists while the sift runs (refreshed by the sift). */
  alive: (sift: string) => `polysift:sift:${sift}:alive`,
  /** Hash job index -> encoded JobOutcome, per round of jobs (one `map` call of the executor). */
  results: (sift: string, round: number) => `polysift:sift:${sift}:results:${round}`,
  /** Hash worker id -> JSON { host, pid, threads, seenMs } of the workers serving the queue. */
  workers: 'polysift:workers',
};

/** Job id: sift, round, job index and attempt (a job re-sent after it vanished gets a new attempt number). BullMQ ids may not hold ':'. */
export function jobId(sift: string, round: number, index: number, attempt: number): string {
  return `${sift}.r${round}.j${index}.a${attempt}`;
}
