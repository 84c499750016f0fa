// Connections to the Redis server behind the job queue, with one rule for a server that cannot be reached or goes
// away: keep trying for `patienceSeconds`, then give up with one line that names the URL and the last error. Both
// sides (sift and `polysift worker`) use it. Only the queue modules import this file; a sift without --queue never
// loads it (nor bullmq, nor ioredis).
import { Redis } from 'ioredis';

/** Seconds a connection keeps trying to reach Redis before the run gives up (overridden by --queue-patience). */
export const DEFAULT_PATIENCE_SECONDS = 30;
/** Pause between reconnection attempts, ms. */
const RETRY_MS = 500;

/** A queue problem the user must act on; its message is one line that names the server. */
export class QueueError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'QueueError';
  }
}

/** Check a --queue value and return it; the password, if any, is hidden in messages by `shownUrl`. */
export function checkQueueUrl(url: string): string {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    throw new QueueError(`--queue must be a URL such as redis://HOST:PORT, not '${url}'`);
  }
  if (u.protocol !== 'redis:' && u.protocol !== 'rediss:') throw new QueueError(`--queue must be a redis:// (or rediss://) URL, not '${url}'`);
  if (u.hostname === '') throw new QueueError(`--queue needs a host, as in redis://HOST:PORT, not '${url}'`);
  return url;
}

/** The URL as shown in messages: the password replaced by ***. */
export function shownUrl(url: string): string {
  try {
    const u = new URL(url);
    if (u.password) u.password = '***';
    return u.toString().replace(/\/$/, '');
  } catch {
    return url;
  }
}

/** Options of every connection: BullMQ's blocking commands need maxRetriesPerRequest null; reconnect until patience runs out. */
function redisOptions(patienceSeconds: number) {
  const attempts = Math.max(1, Math.ceil((patienceSeconds * 1000) / RETRY_MS));
  return {
    maxRetriesPerRequest: null,
    connectTimeout: Math.max(1000, Math.min(10_000, patienceSeconds * 1000)),
    // Retry every RETRY_MS until patience runs out; then the connection ends and every waiting command fails.
    retryStrategy: (times: number) => (times > attempts ? null : RETRY_MS),
    // No reconnect storm on a reply error (a wrong password stays wrong).
    reconnectOnError: () => false,
  };
}

export interface QueueConnection {
  redis: Redis;
  url: string;
  /** The last connection error seen (for the message when the server is lost). */
  lastError(): string;
  /** Resolves when the connection has given up for good (the server stayed away longer than the patience). */
  lost: Promise<QueueError>;
  /** True once `lost` has resolved. */
  isLost(): boolean;
  close(): Promise<void>;
}

/**
 * Connect to the Redis server at `url`, trying for `patienceSeconds`. Rejects with a QueueError naming the URL
 * when it cannot be reached.
 */
export async function connectQueue(url: string, patienceSeconds = DEFAULT_PATIENCE_SECONDS): Promise<QueueConnection> {
  checkQueueUrl(url);
  const shown = shownUrl(url);
  const redis = new Redis(url, redisOptions(patienceSeconds));
  let last = '';
  let lostFlag = false;
  let closing = false;
  redis.on('error', (err: Error) => {
    last = oneLine(err);
  });
  let resolveLost!: (e: QueueError) => void;
  const lost = new Promise<QueueError>((r) => (resolveLost = r));
  await new Promise<void>((resolve, reject) => {
    const onReady = () => {
      redis.off('end', onEnd);
      resolve();
    };
    const onEnd = () => {
      redis.off('ready', onReady);
      reject(new QueueError(`cannot reach the job queue at ${shown}${last ? ` (${last})` : ''}; is redis-server running there and reachable from this machine?`));
    };
    redis.once('ready', onReady);
    redis.once('end', onEnd);
  });
  redis.on('end', () => {
    if (closing) return;
    lostFlag = true;
    resolveLost(new QueueError(`lost the job queue at ${shown}: the server went away and did not come back within ${patienceSeconds} s${last ? ` (${last})` : ''}`));
  });
  return {
    redis,
    url,
    lastError: () => last,
    lost,
    isLost: () => lostFlag,
    async close() {
      closing = true;
      if (lostFlag) return;
      try {
        await redis.quit();
      } catch {
        redis.disconnect();
      }
    },
  };
}

/** An error as one line of text. */
export function oneLine(err: unknown): string {
  const message = err instanceof Error ? err.message : String(err);
  return message.split('\n')[0].trim();
}
