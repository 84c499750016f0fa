// `polysift worker --queue URL`: serve the heavy jobs of sifts run with the same --queue, on this machine's cores.
// A thin shell over serveQueue (src/queue/queue-worker.ts), loaded only when this command runs.
import type { Command } from 'commander';
import { writeSync } from 'node:fs';
import { defaultThreads } from '../parallel/pool.js';
import { addQuiet, addThreads, parseSeconds, parseThreads } from './options.js';

interface WorkerCliOptions {
  queue: string;
  threads?: string;
  stallSeconds: string;
  queuePatience: string;
  stopWhenIdle?: string;
  quiet?: boolean;
}

export function registerWorker(program: Command): void {
  const cmd = program
    .command('worker')
    .description('Run the jobs of sifts started with --queue (periodic sets, invariants) on this machine, until stopped.')
    .requiredOption('--queue <url>', 'address of the Redis server holding the job queue, e.g. redis://HOST:6379');
  // One job runs on each worker thread.
  addThreads(cmd);
  cmd
    .option('--stall-seconds <s>', 'a job whose worker goes silent this long is handed to another worker', '30')
    .option('--queue-patience <s>', 'keep trying to reach Redis this long before giving up', '30')
    .option('--stop-when-idle <s>', 'stop (exit 0) after this many seconds without a job, e.g. at the end of a batch job');
  addQuiet(cmd);
  cmd.action(async (o: WorkerCliOptions) => {
    const threads = parseThreads(o.threads) ?? defaultThreads();
    const { serveQueue } = await import('../queue/queue-worker.js');
    const log = o.quiet ? undefined : (line: string) => writeSync(2, `polysift worker: ${line}\n`);
    const running = await serveQueue(o.queue, {
      threads,
      stallSeconds: parseSeconds(o.stallSeconds, '--stall-seconds'),
      patienceSeconds: parseSeconds(o.queuePatience, '--queue-patience'),
      stopWhenIdleSeconds: o.stopWhenIdle === undefined ? null : parseSeconds(o.stopWhenIdle, '--stop-when-idle'),
      log,
    });
    // First signal: finish the running jobs, then stop. Second: stop now (the jobs go to other workers).
    let signals = 0;
    const onSignal = () => {
      signals++;
      void running.stop(signals > 1);
    };
    process.on('SIGINT', onSignal);
    process.on('SIGTERM', onSignal);
    try {
      await running.finished;
    } finally {
      process.off('SIGINT', onSignal);
      process.off('SIGTERM', onSignal);
    }
  });
}
