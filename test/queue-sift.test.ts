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
import { startRedis, startWorker, type RedisServer, type WorkerProcess } from './helpers/redis.js';
import { outputsOf } from './helpers/sift-outputs.js';

const dir = mkdtempSync(join(tmpdir(), 'polysift-queue-'));
/**
 * A generated landscape with a block whose periodic set fails (atom site loop without rows): it must stay a rejected
 * row. With `window`, that block has the lowest energy of all, so the periodic-set jobs cannot tell which structures
 * the window keeps and the invariants stage sends a second round of jobs.
 */
function landscapeFiles(seed: number, name: string, window: boolean): SiftOptions {
  const g = generateLandscape({ seed, packings: 10, copiesPerPacking: 8, closePairs: 2, idPrefix: `${name}-` });
  const cif = join(dir, `${name}.cif`);
  const energies = join(dir, `${name}.csv`);
  writeFileSync(
    cif,
    `${g.cif}\ndata_${name}_no_sites\n_cell_length_a 5\n_cell_length_b 6\n_cell_length_c 7\n_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n` +
      `loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n`,
  );
  writeFileSync(energies, `${g.energiesCsv.trimEnd()}\n${name}_no_sites,-200\n`);
  return { inputs: [cif], energiesFile: energies, energyWindow: window ? 4 : null, threads: 1 };
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
    const rows = outputsOf(local)['structures.csv'].split('\n');
    expect(rows.filter((r) => r.startsWith('a_no_sites,') && r.includes(',rejected,'))).toHaveLength(1);
  });

  it('keeps two sifts on one queue apart, with an energy window and two rounds of jobs', async () => {
    const a = landscapeFiles(32, 'b', true);
    const b = landscapeFiles(33, 'c', false);
    const [la, lb] = [await sift(a), await sift(b)];
    expect(la.landscape.counts.outsideWindow).toBeGreaterThan(0);
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
  });

  it('refuses a job naming a task it does not know, and the sift says so', async () => {
    const executor = await openQueueExecutor(redis.url);
    try {
      await expect(executor.map('nonsense' as 'blocks', [{}])).rejects.toThrow(/^a job of this sift failed on a worker \(nonsense #0\): unknown task 'nonsense'$/);
    } finally {
      await executor.close();
    }
  });
});
