// The worker side of the job queue (`polysift worker --queue URL`): take jobs of any sift from the BullMQ queue,
// run each on one of this machine's worker threads, store the result where that sift collects it.
//
// A job runs on a thread so the worker's own event loop stays free to renew the job's lock; when a worker dies
// (SIGKILL, a machine lost) its lock lapses after --stall-seconds and BullMQ's stalled-job check, run by every
// other worker, hands the job to one of them. Results are written with HSETNX under (sift, round, job): a job that
// runs twice is stored once, and a job whose result (or its taken marker) is already there is not run again.
// A job of a sift that is gone (its liveness key expired) is skipped. A job from a sift of another polysift version
// is refused: the same numbers need the same code.
import { hostname } from 'node:os';
import { randomBytes } from 'node:crypto';
import { UnrecoverableError, Worker, type Job } from 'bullmq';
import { TASKS, type TaskName } from '../parallel/executor.js';
import { encodePayload } from '../parallel/codec.js';
import { startThreadPool, type ThreadPool } from '../parallel/pool.js';
import { VERSION } from '../version.js';
import { connectQueue, oneLine, shownUrl, type QueueConnection } from './redis.js';
import { keys, MAX_STALLS, QUEUE_NAME, RESULT_TTL_MS, WORKER_REFRESH_MS, DEFAULT_STALL_SECONDS, type JobData, type JobOutcome } from './protocol.js';
import type { EncodedJob } from './run-encoded.js';

export interface WorkerOptions {
  /** Jobs run at once, one per thread. */
  threads: number;
  stallSeconds?: number;
  patienceSeconds?: number;
  /** Stop (exit 0) after this many seconds without a job; null to serve until stopped. */
  stopWhenIdleSeconds?: number | null;
  /** One line per event (start, job started, job done, stop); nothing when absent. */
  log?: (line: string) => void;
}

export interface RunningWorker {
  /** Resolves when the worker has stopped: 'idle' (--stop-when-idle), 'stopped' (stop()), or rejects with a QueueError when Redis is lost. */
  finished: Promise<'idle' | 'stopped'>;
  /** Stop taking jobs; wait for running ones unless `now`. */
  stop(now?: boolean): Promise<void>;
}

const RUN_ENCODED_URL = new URL(import.meta.url.endsWith('.ts') ? './run-encoded.ts' : './run-encoded.js', import.meta.url).href;

/** Connect to the queue at `url` and serve jobs until stopped, idle, or the server is lost. */
export async function serveQueue(url: string, opts: WorkerOptions): Promise<RunningWorker> {
  const conn = await connectQueue(url, opts.patienceSeconds);
  const log = opts.log ?? (() => {});
  const stallMs = Math.round((opts.stallSeconds ?? DEFAULT_STALL_SECONDS) * 1000);
  const id = `${hostname()}-${process.pid}-${randomBytes(3).toString('hex')}`;
  const pool = startThreadPool(opts.threads);
  let active = 0;
  let lastJobEnd = Date.now();
  let stopping: Promise<void> | null = null;

  const processor = async (job: Job<JobData>): Promise<string> => {
    active++;
    try {
      return await runJob(conn, pool, job, log, () => stopping !== null);
    } finally {
      active--;
      lastJobEnd = Date.now();
    }
  };
  const worker = new Worker<JobData, string>(QUEUE_NAME, processor, {
    connection: conn.redis,
    concurrency: opts.threads,
    lockDuration: stallMs,
    stalledInterval: stallMs,
    maxStalledCount: MAX_STALLS,
    name: id,
  });
  // Connection trouble is handled through `conn.lost`; a job's own failure is reported to its sift.
  worker.on('error', () => {});

  const announce = () =>
    conn.redis.hset(keys.workers, id, JSON.stringify({ host: hostname(), pid: process.pid, threads: opts.threads, seenMs: Date.now() })).catch(() => 0);
  await announce();
  const timers: NodeJS.Timeout[] = [setInterval(() => void announce(), WORKER_REFRESH_MS)];
  log(`serving the job queue at ${shownUrl(url)} with ${opts.threads} thread(s) as ${id}`);

  let resolveFinished!: (why: 'idle' | 'stopped') => void;
  let rejectFinished!: (err: Error) => void;
  const finished = new Promise<'idle' | 'stopped'>((res, rej) => {
    resolveFinished = res;
    rejectFinished = rej;
  });
  const stop = (why: 'idle' | 'stopped', now = false): Promise<void> => {
    if (!stopping) {
      stopping = (async () => {
        for (const t of timers) clearInterval(t);
        await worker.close(now).catch(() => {});
        await pool.close();
        if (!conn.isLost()) await conn.redis.hdel(keys.workers, id).catch(() => 0);
        await conn.close();
        log(why === 'idle' ? 'no job for a while: stopping' : 'stopped');
        resolveFinished(why);
      })();
    }
    return stopping;
  };
  if (opts.stopWhenIdleSeconds != null) {
    const idleMs = opts.stopWhenIdleSeconds * 1000;
    const t = setInterval(() => {
      if (active === 0 && Date.now() - lastJobEnd >= idleMs) void stop('idle');
    }, Math.min(1000, idleMs));
    timers.push(t);
  }
  void conn.lost.then(async (err) => {
    for (const t of timers) clearInterval(t);
    await worker.close(true).catch(() => {});
    await pool.close();
    rejectFinished(err);
  });
  return { finished, stop: (now) => stop('stopped', now) };
}

/** Run one job: checks, the task on a thread, the result stored once. */
async function runJob(conn: QueueConnection, pool: ThreadPool, job: Job<JobData>, log: (line: string) => void, stopping: () => boolean): Promise<string> {
  const d = job.data;
  const redis = conn.redis;
  const resultsKey = keys.results(d.sift, d.round);
  const field = String(d.index);
  const store = async (outcome: JobOutcome | string) => {
    const text = typeof outcome === 'string' ? outcome : encodePayload(outcome);
    await redis.multi().hsetnx(resultsKey, field, text).pexpire(resultsKey, RESULT_TTL_MS).exec();
  };
  if (d.version !== VERSION) {
    const why = `the worker runs polysift ${VERSION} but the sift runs ${d.version}; run one version on every machine`;
    await store({ error: why });
    throw new UnrecoverableError(why);
  }
  if (!Object.prototype.hasOwnProperty.call(TASKS, d.task)) {
    const why = `unknown task '${d.task}'`;
    await store({ error: why });
    throw new UnrecoverableError(why);
  }
  if ((await redis.exists(keys.alive(d.sift))) === 0) {
    log(`job ${job.id}: skipped, its sift is gone`);
    return 'skipped';
  }
  if ((await redis.hexists(resultsKey, field)) === 1) {
    log(`job ${job.id}: already done`);
    return 'already done';
  }
  log(`job ${job.id}: started`);
  const t0 = performance.now();
  let output: string;
  try {
    output = await pool.run<EncodedJob, string>(RUN_ENCODED_URL, 'runEncodedJob', { task: d.task as TaskName, input: d.input });
  } catch (err) {
    // Stopped part way (stop now): not the job's fault; it is retried, here or elsewhere.
    if (stopping()) throw err;
    // The same input fails the same way on any worker: no retry, the sift stops with the reason.
    const why = oneLine(err);
    await store({ error: why });
    throw new UnrecoverableError(why);
  }
  // {"ok": <output>} written around the encoded output, so the output is not decoded and encoded again here.
  await store(`{"ok":${output}}`);
  log(`job ${job.id}: done in ${((performance.now() - t0) / 1000).toFixed(2)} s`);
  return 'done';
}
