// Sift on the job queue (issue 15): with the periodic sets and invariants run as BullMQ jobs by three
// `polysift worker` processes on a real Redis (Debian's redis-server on a free loopback port), the outputs are
// byte-identical to a local sift (project rule: only landscape.json's `run` field may differ); every job is done
// exactly once; two sifts on one queue at the same time each get their own results.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape } from '../src/demo/landscape.js';
import { sift, type SiftOptions } from '../src/landscape/sift.js';
import { openQueueExecutor } from '../src/queue/queue-executor.js';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { decodePayload } from '../src/parallel/codec.js';
import { jobId, keys, QUEUE_NAME, type JobData } from '../src/queue/protocol.js';
import { VERSION } from '../src/version.js';
import { startRedis, startWorker, type RedisServer, type WorkerProcess } from './helpers/redis.js';
import { outputsOf } from './helpers/sift-outputs.js';

const dir = mkdtempSync(join(tmpdir(), 'polysift-queue-'));
/**
 * A generated landscape plus a block of one hydrogen atom. With `window`, hydrogens are dropped, so that block reads
 * as a record but has no periodic set (a rejected row whose reason comes back from the job), and it has the lowest
 * energy of all: the periodic-set jobs cannot tell which structures the window keeps, and the invariants stage
 * sends a second round of jobs.
 */
function landscapeFiles(seed: number, name: string, window: boolean): SiftOptions {
  const g = generateLandscape({ seed, packings: 10, copiesPerPacking: 8, closePairs: 2, idPrefix: `${name}-` });
  const cif = join(dir, `${name}.cif`);
  const energies = join(dir, `${name}.csv`);
  writeFileSync(
    cif,
    `${g.cif}\ndata_${name}_only_h\n_cell_length_a 5\n_cell_length_b 6\n_cell_length_c 7\n_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n` +
      `loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nH1 H 0.1 0.2 0.3\n`,
  );
  writeFileSync(energies, `${g.energiesCsv.trimEnd()}\n${name}_only_h,${window ? -200 : -50}\n`);
  return { inputs: [cif], energiesFile: energies, energyWindow: window ? 4 : null, hydrogens: window ? 'drop' : 'keep', threads: 1 };
}

let redis: RedisServer;
let workers: WorkerProcess[] = [];

beforeAll(async () => {
  redis = await startRedis();
  workers = [0, 1, 2].map(() => startWorker(redis.url, ['--threads', '1', '--stall-seconds', '2']));
  await Promise.all(workers.map((w) => w.waitFor(/serving the job queue/)));
});

afterAll(async () => {
  for (const w of workers) w.proc.kill('SIGTERM');
  await Promise.all(workers.map((w) => w.exited));
  await redis?.stop();
});

const doneLines = () => workers.flatMap((w) => w.log().split('\n').filter((l) => / done in /.test(l)));

// Several processes (Redis, workers, the sift) share a machine that may be busy: generous limits.
const TIMEOUT_MS = 240_000;

describe('sift on the job queue', () => {
  it('gives byte-identical outputs with three workers, each job done once', async () => {
    const opts = landscapeFiles(31, 'a', false);
    const local = await sift(opts);
    const executor = await openQueueExecutor(redis.url);
    const before = doneLines().length;
    try {
      const queued = await sift({ ...opts, executor, blocksPerJob: 7 });
      expect(outputsOf(queued)).toEqual(outputsOf(local));
    } finally {
      await executor.close();
    }
    // 81 readable blocks, 7 per job: 12 jobs, each run exactly once, by more than one worker.
    const done = doneLines().slice(before);
    expect(done.length).toBe(12);
    const ids = done.map((l) => /job (\S+):/.exec(l)![1]);
    expect(new Set(ids).size).toBe(12);
    const busy = workers.filter((w) => / done in /.test(w.log())).length;
    expect(busy).toBeGreaterThanOrEqual(2);
  }, TIMEOUT_MS);

  it('keeps two sifts on one queue apart, with an energy window and two rounds of jobs', async () => {
    const a = landscapeFiles(32, 'b', true);
    const b = landscapeFiles(33, 'c', false);
    const [la, lb] = [await sift(a), await sift(b)];
    expect(la.landscape.counts.outsideWindow).toBeGreaterThan(0);
    const onlyH = la.landscape.structures.find((r) => r.id === 'b_only_h')!;
    expect([onlyH.status, onlyH.reason]).toEqual(['rejected', 'every atom site is hydrogen, so nothing is left with --hydrogens drop; use --hydrogens keep']);
    const [ea, eb] = [await openQueueExecutor(redis.url), await openQueueExecutor(redis.url)];
    expect(ea.siftId).not.toBe(eb.siftId);
    try {
      const [qa, qb] = await Promise.all([sift({ ...a, executor: ea, blocksPerJob: 5 }), sift({ ...b, executor: eb, blocksPerJob: 5 })]);
      expect(outputsOf(qa)).toEqual(outputsOf(la));
      expect(outputsOf(qb)).toEqual(outputsOf(lb));
      // The windowed sift needed a second round of jobs for the invariants; the other did not.
      const done = doneLines();
      expect(done.some((l) => l.includes(`job ${ea.siftId}.r2.`))).toBe(true);
      expect(done.some((l) => l.includes(`job ${eb.siftId}.r2.`))).toBe(false);
    } finally {
      await Promise.all([ea.close(), eb.close()]);
    }
  }, TIMEOUT_MS);

  it('refuses a job naming a task it does not know, and the sift says so', async () => {
    const executor = await openQueueExecutor(redis.url);
    try {
      await expect(executor.map('nonsense' as 'blocks', [{}])).rejects.toThrow(/^a job of this sift failed on a worker \(nonsense #0\): unknown task 'nonsense'$/);
    } finally {
      await executor.close();
    }
  }, TIMEOUT_MS);

  it('refuses a job from a sift of another polysift version, saying which versions differ', async () => {
    const conn = new Redis(redis.url, { maxRetriesPerRequest: null });
    const queue = new Queue<JobData>(QUEUE_NAME, { connection: conn });
    try {
      const sift = 'feedc0de00000000';
      await conn.set(keys.alive(sift), 'x', 'PX', 60_000);
      await queue.add('blocks', { sift, round: 1, index: 0, task: 'blocks', version: '0.0.0-other', input: '{}' }, { jobId: jobId(sift, 1, 0, 0) });
      let text: string | null = null;
      for (let t = 0; t < 400 && text === null; t++) {
        text = await conn.hget(keys.results(sift, 1), '0');
        if (text === null) await new Promise((r) => setTimeout(r, 50));
      }
      expect(decodePayload(text!)).toEqual({ error: `the worker runs polysift ${VERSION} but the sift runs 0.0.0-other; run one version on every machine` });
    } finally {
      await queue.close();
      await conn.quit();
    }
  }, TIMEOUT_MS);

  it('stops a worker with exit code 0 after --stop-when-idle seconds without a job', async () => {
    const w = startWorker(redis.url, ['--threads', '1', '--stop-when-idle', '1']);
    expect(await w.exited).toBe(0);
    expect(w.log().trimEnd().split('\n').slice(-1)).toEqual(['polysift worker: no job for a while: stopping']);
  }, TIMEOUT_MS);
});
