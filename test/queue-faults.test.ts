// Faults of the job queue (issue 15), on a real Redis (Debian's redis-server on a free loopback port):
// - a worker killed with SIGKILL in the middle of a job: the job goes to another worker, and the outputs are still
//   byte-identical to a local sift (nothing lost, nothing counted twice);
// - Redis unreachable: one line naming the URL, exit 1, no outputs, for both sift and worker;
// - Redis killed during a run: one line naming the URL, exit 1, no outputs; the invariants done so far are in the
//   cache and a re-run on a new server resumes from them, with the same outputs as a local sift.
import { afterAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { openQueueExecutor } from '../src/queue/queue-executor.js';
import { freePort, startRedis, startWorker, type RedisServer, type WorkerProcess } from './helpers/redis.js';
import { outputsIn, outputsOf } from './helpers/sift-outputs.js';

const cli = join(process.cwd(), 'src', 'cli.ts');
const dir = mkdtempSync(join(tmpdir(), 'polysift-queue-faults-'));
const g = generateLandscape({ seed: 41, packings: 8, copiesPerPacking: 8, closePairs: 1 });
const cif = join(dir, 'run.cif');
const energies = join(dir, 'energies.csv');
writeFileSync(cif, g.cif);
writeFileSync(energies, g.energiesCsv);
// A deep PDD makes each job take a good fraction of a second, so a kill lands in the middle of one.
const K = 1500;
const base = { inputs: [cif], energiesFile: energies, k: K, threads: 1 };

const servers: RedisServer[] = [];
const workers: WorkerProcess[] = [];
afterAll(async () => {
  for (const w of workers) if (w.proc.exitCode === null && w.proc.signalCode === null) w.proc.kill('SIGKILL');
  await Promise.all(workers.map((w) => w.exited));
  for (const s of servers) await s.stop();
});

async function server(): Promise<RedisServer> {
  const s = await startRedis();
  servers.push(s);
  return s;
}
function worker(url: string, args: string[] = []): WorkerProcess {
  const w = startWorker(url, ['--threads', '1', '--stall-seconds', '1', ...args]);
  workers.push(w);
  return w;
}

/** Run the CLI (from the sources) to the end; stderr and exit code. */
function polysift(args: string[]): Promise<{ status: number | null; stderr: string; stdout: string }> {
  const child = spawn(process.execPath, ['--import', 'tsx', cli, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
  let stderr = '';
  let stdout = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  return new Promise((resolve) => child.on('close', (status) => resolve({ status, stderr, stdout })));
}

const local = sift(base);

// Several processes (Redis, workers, the sift) share a machine that may be busy: generous limits.
const TIMEOUT_MS = 300_000;

describe('job queue faults', () => {
  it('retries the job of a worker killed with SIGKILL mid-job on another worker, with identical outputs', async () => {
    const redis = await server();
    const ws = [worker(redis.url), worker(redis.url), worker(redis.url)];
    await Promise.all(ws.map((w) => w.waitFor(/serving the job queue/)));
    const executor = await openQueueExecutor(redis.url);
    try {
      const queued = sift({ ...base, executor, blocksPerJob: 8 });
      // The first worker to start a job is killed at once, with no chance to finish or hand it back.
      const [victim, started] = await Promise.race(ws.map((w) => w.waitFor(/: started$/).then((line) => [w, line] as const)));
      victim.proc.kill('SIGKILL');
      expect(await victim.exited).toBe(null);
      const killedJob = /job (\S+): started/.exec(started)![1];
      const run = await queued;
      expect(outputsOf(run)).toEqual(outputsOf(await local));
      // The killed worker never finished its job; another worker did, after the job's lock lapsed.
      expect(victim.log()).not.toContain(`job ${killedJob}: done`);
      const others = ws.filter((w) => w !== victim);
      expect(others.filter((w) => w.log().includes(`job ${killedJob}: done`))).toHaveLength(1);
      // 64 blocks, 8 per job: 8 jobs, each finished exactly once.
      const done = others.flatMap((w) => w.log().split('\n').filter((l) => l.includes(`job ${executor.siftId}.`) && / done in /.test(l)));
      expect(done).toHaveLength(8);
    } finally {
      await executor.close();
    }
  }, TIMEOUT_MS);

  it('says in one line that Redis cannot be reached, exits 1 and writes nothing (sift and worker)', async () => {
    const port = await freePort();
    const url = `redis://127.0.0.1:${port}`;
    const out = join(dir, 'unreachable');
    const r = await polysift(['sift', cif, '--out', out, '--queue', url, '--queue-patience', '1']);
    expect(r.status).toBe(1);
    expect(r.stderr).toBe(
      `polysift: cannot reach the job queue at ${url} (connect ECONNREFUSED 127.0.0.1:${port}); is redis-server running there and reachable from this machine?\n`,
    );
    expect(existsSync(out)).toBe(false);
    const w = spawnSync(process.execPath, ['--import', 'tsx', cli, 'worker', '--queue', url, '--queue-patience', '1'], { encoding: 'utf8' });
    expect(w.status).toBe(1);
    expect(w.stderr).toBe(r.stderr);
    const bad = spawnSync(process.execPath, ['--import', 'tsx', cli, 'worker', '--queue', 'http://example.invalid'], { encoding: 'utf8' });
    expect(bad.status).toBe(1);
    expect(bad.stderr).toBe("polysift: --queue must be a redis:// (or rediss://) URL, not 'http://example.invalid'\n");
  }, TIMEOUT_MS);

  it('stops in one line when Redis goes away mid-run, writes no outputs, and resumes from the cache on a re-run', async () => {
    const redis = await server();
    const w = worker(redis.url, ['--queue-patience', '2']);
    await w.waitFor(/serving the job queue/);
    const out = join(dir, 'lost');
    const args = ['sift', cif, '--energies', energies, '--out', out, '-k', String(K), '--job-size', '4', '--threads', '1', '--quiet'];
    // Kill the server once the worker has finished three jobs.
    const run = polysift([...args, '--queue', redis.url, '--queue-patience', '2']);
    await w.waitFor(/done in/);
    while ((w.log().match(/ done in /g) ?? []).length < 3) await new Promise((r) => setTimeout(r, 20));
    await redis.kill();
    const r = await run;
    expect(r.status).toBe(1);
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(
      new RegExp(
        `^polysift: lost the job queue at ${redis.url.replace(/[.]/g, '\\.')}: the server went away and did not come back within 2 s \\(.*ECONNREFUSED.*\\); ` +
          'the invariants of (\\d+) structure\\(s\\) computed so far are saved in the cache, so the same command run again resumes from there$',
      ),
    );
    // What the sift had collected when the server died: whole jobs of 4, no more than the worker had finished.
    const saved = Number(/invariants of (\d+) structure/.exec(lines[0])![1]);
    const finished = (w.log().match(/ done in /g) ?? []).length;
    expect(saved).toBeGreaterThan(0);
    expect(saved % 4).toBe(0);
    expect(saved).toBeLessThanOrEqual(4 * finished);
    expect(saved).toBeLessThan(64);
    // No output file, only the cache folder.
    expect(readdirSync(out)).toEqual(['.polysift-cache']);
    // The worker gives up too, in one line, with exit code 1.
    expect(await w.exited).toBe(1);
    expect(w.log().trimEnd().split('\n').pop()).toMatch(new RegExp(`^polysift: lost the job queue at ${redis.url.replace(/[.]/g, '\\.')}: `));

    // A new server, a new worker: the re-run takes the saved invariants from the cache and sends only the rest.
    const again = await server();
    const w2 = worker(again.url);
    await w2.waitFor(/serving the job queue/);
    const r2 = await polysift([...args, '--queue', again.url, '--json']);
    expect(r2.status, r2.stderr).toBe(0);
    const summary = JSON.parse(r2.stdout) as { cache: { hits: number; misses: number } };
    expect(summary.cache).toMatchObject({ hits: saved, misses: 64 - saved });
    expect(outputsIn(out)).toEqual(outputsOf(await local));
  }, TIMEOUT_MS);
});
