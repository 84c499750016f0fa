// The job queue for library users, loaded on first use: importing polysift never loads bullmq or ioredis, and a
// sift without a queue never touches Redis.
import type { QueueExecutorOptions } from './queue-executor.js';
import type { RunningWorker, WorkerOptions } from './queue-worker.js';
import type { Executor } from '../parallel/executor.js';

/** An executor whose jobs go to the Redis queue at `url` (pass it as `sift({ executor })`; close it after). */
export async function openQueue(url: string, opts: QueueExecutorOptions = {}): Promise<Executor & { siftId: string }> {
  const { openQueueExecutor } = await import('./queue-executor.js');
  return openQueueExecutor(url, opts);
}

/** Serve the jobs of the Redis queue at `url` on this machine (what `polysift worker` runs). */
export async function serveQueueJobs(url: string, opts: WorkerOptions): Promise<RunningWorker> {
  const { serveQueue } = await import('./queue-worker.js');
  return serveQueue(url, opts);
}
