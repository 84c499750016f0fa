// The sift side of the job queue: an Executor (src/parallel/executor.ts) whose jobs go to a BullMQ queue on Redis
// and are run by `polysift worker` processes anywhere that reaches the server (src/queue/queue-worker.ts).
//
// One `map` call is one round of jobs. Jobs are added a few at a time (at most about two per worker thread, at
// least MIN_IN_FLIGHT, waiting in Redis), so a run of a million structures never parks all its block text in the
// server. Workers store each result under (sift, round, job) with HSETNX; the sift polls that hash, takes each job
// once, and replaces what it took by an empty marker. When nothing arrives for a while it looks for jobs that failed (BullMQ's failed
// set) or vanished without a result (a worker skipped it while this sift's liveness key had lapsed) and re-sends
// the vanished ones. Job ids and keys start with a random sift id: two sifts on one queue never mix.
import { randomBytes } from 'node:crypto';
import { Queue } from 'bullmq';
import type { Executor, ExecutorRun, TaskName } from '../parallel/executor.js';
import { decodePayload, encodePayload } from '../parallel/codec.js';
import { VERSION } from '../version.js';
import { connectQueue, oneLine, QueueError, shownUrl, type QueueConnection } from './redis.js';
import { ALIVE_REFRESH_MS, ALIVE_TTL_MS, jobId, keys, MAX_STALLS, QUEUE_NAME, WORKER_REFRESH_MS, type JobData, type JobOutcome } from './protocol.js';

/** Jobs waiting or running at once, at least. */
const MIN_IN_FLIGHT = 16;
/** How often the sift looks for finished jobs, ms. */
const POLL_MS = 50;
/** After this long with no result (ms), look for failed or vanished jobs. */
const CHECK_AFTER_MS = 5_000;
/** A worker entry not refreshed for this long (ms) is removed from the workers hash. */
const STALE_WORKER_MS = 3600_000;
/** Say once that no worker serves the queue when none has been seen for this long (ms). */
const NO_WORKER_NOTE_MS = 10_000;

export interface QueueExecutorOptions {
  /** Seconds to keep trying to reach Redis before giving up. */
  patienceSeconds?: number;
  /** Where to say things a user waiting should know (no worker connected, ...). */
  note?: (line: string) => void;
}

/** Connect to the queue at `url` (rejects with a one-line QueueError naming it when unreachable). */
export async function openQueueExecutor(url: string, opts: QueueExecutorOptions = {}): Promise<Executor & { siftId: string }> {
  const conn = await connectQueue(url, opts.patienceSeconds);
  const queue = new Queue<JobData>(QUEUE_NAME, { connection: conn.redis });
  // Connection trouble surfaces through `conn.lost`; BullMQ's own error events would only repeat it.
  queue.on('error', () => {});
  try {
    await raceLost(conn, queue.waitUntilReady());
  } catch (err) {
    await queue.close().catch(() => {});
    await conn.close();
    throw err;
  }
  return new QueueExecutor(conn, queue, opts);
}

class QueueExecutor implements Executor {
  readonly kind = 'queue' as const;
  readonly siftId = randomBytes(8).toString('hex');
  private rounds = 0;
  private closed = false;
  private heartbeat: NodeJS.Timeout;
  /** Job ids added and not yet collected, so close() can take them back off the queue. */
  private pending = new Set<string>();

  constructor(
    private readonly conn: QueueConnection,
    private readonly queue: Queue<JobData>,
    private readonly opts: QueueExecutorOptions,
  ) {
    // Workers skip jobs of a sift whose liveness key is gone (a sift that died leaves no work behind for long).
    this.heartbeat = setInterval(() => void this.touch().catch(() => {}), ALIVE_REFRESH_MS);
    this.heartbeat.unref();
  }

  private touch(): Promise<unknown> {
    return this.conn.redis.set(keys.alive(this.siftId), VERSION, 'PX', ALIVE_TTL_MS);
  }

  async map<I, O>(task: TaskName, inputs: readonly I[], run: ExecutorRun<O> = {}): Promise<O[]> {
    if (this.closed) throw new Error('the queue executor is closed');
    try {
      return await raceLost(this.conn, this.round<I, O>(task, inputs, run));
    } catch (err) {
      if (err instanceof QueueError) throw err;
      // A command failed because the connection went down: say so in the queue's words.
      if (this.conn.isLost()) throw await this.conn.lost;
      throw new QueueError(`the job queue at ${shownUrl(this.conn.url)} failed: ${oneLine(err)}`);
    }
  }

  private async round<I, O>(task: TaskName, inputs: readonly I[], run: ExecutorRun<O>): Promise<O[]> {
    const n = inputs.length;
    const results = new Array<O>(n);
    if (n === 0) return results;
    const round = ++this.rounds;
    const redis = this.conn.redis;
    const resultsKey = keys.results(this.siftId, round);
    const taken = new Uint8Array(n);
    const attempt = new Int32Array(n);
    const inFlight = new Set<number>();
    let next = 0;
    let done = 0;
    let lastProgress = Date.now();
    let lastWorkerSeen = Date.now();
    let noted = false;
    let workerThreads = 0;
    let lastWorkerCheck = 0;
    await this.touch();

    const send = async (indices: number[]) => {
      const jobs = indices.map((i) => {
        const id = jobId(this.siftId, round, i, attempt[i]);
        this.pending.add(id);
        const data: JobData = { sift: this.siftId, round, index: i, task, version: VERSION, input: encodePayload(inputs[i]) };
        return {
          name: task,
          data,
          opts: { jobId: id, attempts: 3, backoff: { type: 'fixed', delay: 1000 }, removeOnComplete: true, removeOnFail: { age: 24 * 3600, count: 1000 } },
        };
      });
      if (jobs.length > 0) await this.queue.addBulk(jobs);
    };

    while (done < n) {
      const now = Date.now();
      if (now - lastWorkerCheck >= WORKER_REFRESH_MS) {
        lastWorkerCheck = now;
        workerThreads = await this.workerThreads();
        if (workerThreads > 0) lastWorkerSeen = now;
        else if (!noted && now - lastWorkerSeen >= NO_WORKER_NOTE_MS) {
          noted = true;
          this.opts.note?.(`waiting for workers: none is serving the job queue at ${shownUrl(this.conn.url)}; start some with: polysift worker --queue URL`);
        }
      }
      // Keep about two jobs per worker thread waiting or running.
      const limit = Math.max(MIN_IN_FLIGHT, 2 * workerThreads);
      const batch: number[] = [];
      while (next < n && inFlight.size + batch.length < limit) batch.push(next++);
      await send(batch);
      for (const i of batch) inFlight.add(i);

      const fields = await redis.hkeys(resultsKey);
      const fresh = fields.map(Number).filter((i) => Number.isInteger(i) && i >= 0 && i < n && !taken[i]);
      if (fresh.length > 0) {
        const texts = await redis.hmget(resultsKey, ...fresh.map(String));
        // Replace what was taken by an empty marker: the memory is freed, and a worker that runs the job again
        // (its first worker died after storing) still finds the job done.
        await redis.hset(resultsKey, Object.fromEntries(fresh.map((i) => [String(i), ''])));
        fresh.forEach((i, t) => {
          const outcome = decodePayload<JobOutcome>(texts[t]!);
          if ('error' in outcome) throw new QueueError(`a job of this sift failed on a worker (${task} #${i}): ${outcome.error}`);
          taken[i] = 1;
          inFlight.delete(i);
          this.pending.delete(jobId(this.siftId, round, i, attempt[i]));
          results[i] = outcome.ok as O;
          done++;
          run.onResult?.(i, results[i]);
          run.onProgress?.(done, n);
        });
        lastProgress = Date.now();
        continue;
      }
      if (Date.now() - lastProgress >= CHECK_AFTER_MS) {
        await this.checkInFlight(task, round, resultsKey, inFlight, attempt, send);
        lastProgress = Date.now();
      }
      await sleep(POLL_MS);
    }
    await redis.del(resultsKey);
    return results;
  }

  /** Worker threads serving the queue now (workers announce themselves every WORKER_REFRESH_MS). */
  private async workerThreads(): Promise<number> {
    const all = await this.conn.redis.hgetall(keys.workers);
    let threads = 0;
    const now = Date.now();
    const gone: string[] = [];
    for (const [id, text] of Object.entries(all)) {
      try {
        const w = JSON.parse(text) as { threads: number; seenMs: number };
        if (now - w.seenMs <= 3 * WORKER_REFRESH_MS) threads += w.threads;
        else if (now - w.seenMs > STALE_WORKER_MS) gone.push(id);
      } catch {
        // An entry this version cannot read is not counted.
      }
    }
    // Workers that were killed never said goodbye: forget them after an hour.
    if (gone.length > 0) await this.conn.redis.hdel(keys.workers, ...gone);
    return threads;
  }

  /**
   * Nothing arrived for a while: a job that failed for good (its worker died MAX_STALLS times, or it kept failing)
   * ends the run with its reason; a job that is gone without a result is sent again under a new attempt id.
   */
  private async checkInFlight(
    task: TaskName,
    round: number,
    resultsKey: string,
    inFlight: Set<number>,
    attempt: Int32Array,
    send: (indices: number[]) => Promise<void>,
  ): Promise<void> {
    const redis = this.conn.redis;
    const ids = [...inFlight];
    const states = await Promise.all(ids.map((i) => this.queue.getJobState(jobId(this.siftId, round, i, attempt[i]))));
    const gone: number[] = [];
    for (let t = 0; t < ids.length; t++) {
      const i = ids[t];
      const state = states[t];
      if (state === 'failed') {
        const job = await this.queue.getJob(jobId(this.siftId, round, i, attempt[i]));
        const reason = job?.failedReason || 'no reason given';
        throw new QueueError(`a job of this sift failed on the queue (${task} #${i}): ${oneLine(reason)}${/stalled/i.test(reason) ? ` (its worker stopped ${MAX_STALLS} times)` : ''}`);
      }
      if (state === 'unknown' || state === 'completed') gone.push(i);
    }
    if (gone.length === 0) return;
    // A result may have landed between the two looks; only jobs still without one are sent again.
    const present = await redis.hmget(resultsKey, ...gone.map(String));
    const resend = gone.filter((_, t) => present[t] === null);
    for (const i of resend) {
      this.pending.delete(jobId(this.siftId, round, i, attempt[i]));
      attempt[i]++;
    }
    await this.touch();
    await send(resend);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    clearInterval(this.heartbeat);
    if (!this.conn.isLost()) {
      try {
        // Jobs of this sift still waiting are of no use to anyone now.
        await Promise.all([...this.pending].map((id) => this.queue.remove(id).catch(() => 0)));
        await this.conn.redis.del(keys.alive(this.siftId));
      } catch {
        // Best effort: the liveness key expires on its own, and workers then skip what is left.
      }
    }
    await this.queue.close().catch(() => {});
    await this.conn.close();
  }
}

/** `p`, or the connection's QueueError if the server is lost first. */
function raceLost<T>(conn: QueueConnection, p: Promise<T>): Promise<T> {
  return Promise.race([p, conn.lost.then((e) => Promise.reject(e))]);
}

function sleep(ms: number): Promise<void> {
  return new Promise((r) => setTimeout(r, ms));
}
