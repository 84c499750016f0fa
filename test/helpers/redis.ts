// A throw-away Redis server for the queue tests: Debian's /usr/bin/redis-server (installed by .ci/run) on a free
// 127.0.0.1 port, no persistence, stopped afterwards; and `polysift worker` processes to serve it. A missing
// server fails the test with the reason, it is never skipped.
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer, createConnection } from 'node:net';
import { existsSync } from 'node:fs';
import { join } from 'node:path';

export const REDIS_SERVER = '/usr/bin/redis-server';

export interface RedisServer {
  port: number;
  url: string;
  /** Shut down (SIGTERM) and wait for the process to end. */
  stop(): Promise<void>;
  /** SIGKILL: the server vanishes as in a crash. */
  kill(): Promise<void>;
}

/** A port on 127.0.0.1 that was free a moment ago. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as { port: number }).port;
      srv.close(() => resolve(port));
    });
  });
}

export async function startRedis(): Promise<RedisServer> {
  if (!existsSync(REDIS_SERVER)) throw new Error(`${REDIS_SERVER} is missing: install Debian's redis-server (apt-get install redis-server), as .ci/run does`);
  for (let attempt = 0; ; attempt++) {
    const port = await freePort();
    const proc = spawn(REDIS_SERVER, ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no', '--loglevel', 'warning'], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let log = '';
    proc.stdout!.on('data', (d: Buffer) => (log += d.toString()));
    proc.stderr!.on('data', (d: Buffer) => (log += d.toString()));
    const exited = new Promise<number | null>((r) => proc.on('exit', (code) => r(code)));
    const up = await Promise.race([waitForPing(port, 10_000), exited.then(() => false)]);
    if (up) {
      const end = async (signal: NodeJS.Signals) => {
        if (proc.exitCode === null && proc.signalCode === null) proc.kill(signal);
        await exited;
      };
      return { port, url: `redis://127.0.0.1:${port}`, stop: () => end('SIGTERM'), kill: () => end('SIGKILL') };
    }
    proc.kill('SIGKILL');
    // Another process may have taken the port between the check and the start: try another.
    if (attempt >= 3) throw new Error(`redis-server did not start: ${log.trim()}`);
  }
}

/** True once the server answers PING with PONG. */
async function waitForPing(port: number, timeoutMs: number): Promise<boolean> {
  const t0 = Date.now();
  while (Date.now() - t0 < timeoutMs) {
    const ok = await new Promise<boolean>((resolve) => {
      const s = createConnection({ port, host: '127.0.0.1' });
      s.on('connect', () => s.write('PING\r\n'));
      s.on('data', (d) => {
        s.destroy();
        resolve(d.toString().startsWith('+PONG'));
      });
      s.on('error', () => resolve(false));
    });
    if (ok) return true;
    await new Promise((r) => setTimeout(r, 50));
  }
  return false;
}

export interface WorkerProcess {
  proc: ChildProcess;
  /** Everything it wrote to stderr so far. */
  log(): string;
  /** Resolves with the exit code (null when killed by a signal) once it has ended. */
  exited: Promise<number | null>;
  /** Resolves when a line matching `re` appears on its stderr. */
  waitFor(re: RegExp, timeoutMs?: number): Promise<string>;
}

const cli = join(process.cwd(), 'src', 'cli.ts');

/** Start `polysift worker` (from the sources, through the tsx loader) with extra arguments. */
export function startWorker(url: string, args: string[] = []): WorkerProcess {
  // Node itself with the TypeScript loader (not the tsx launcher), so a signal reaches the worker process directly.
  const proc = spawn(process.execPath, ['--import', 'tsx', cli, 'worker', '--queue', url, ...args], { stdio: ['ignore', 'ignore', 'pipe'] });
  let log = '';
  const waiters: Array<{ re: RegExp; resolve: (line: string) => void }> = [];
  proc.stderr!.on('data', (d: Buffer) => {
    log += d.toString();
    for (const w of waiters.splice(0)) {
      const line = log.split('\n').find((l) => w.re.test(l));
      if (line !== undefined) w.resolve(line);
      else waiters.push(w);
    }
  });
  const exited = new Promise<number | null>((r) => proc.on('exit', (code) => r(code)));
  return {
    proc,
    log: () => log,
    exited,
    waitFor(re: RegExp, timeoutMs = 60_000) {
      const line = log.split('\n').find((l) => re.test(l));
      if (line !== undefined) return Promise.resolve(line);
      return new Promise<string>((resolve, reject) => {
        const t = setTimeout(() => reject(new Error(`no line matching ${re} from the worker within ${timeoutMs} ms; it wrote:\n${log}`)), timeoutMs);
        waiters.push({
          re,
          resolve: (l) => {
            clearTimeout(t);
            resolve(l);
          },
        });
      });
    },
  };
}
