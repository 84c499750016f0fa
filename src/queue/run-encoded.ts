// Runs one queue job inside a worker thread of `polysift worker`: decode the input, run the named task, encode the
// output. Decoding and encoding happen on the thread too, so the worker's main thread only moves strings and stays
// free to renew its job locks (a job whose lock lapses is handed to another worker).
import { decodePayload, encodePayload } from '../parallel/codec.js';
import { TASKS, taskModuleUrl, type TaskName } from '../parallel/executor.js';
import { loadExport } from '../parallel/pool.js';

export interface EncodedJob {
  task: TaskName;
  input: string;
}

/** The task's output, encoded. Throws what the task throws. */
export async function runEncodedJob(job: EncodedJob): Promise<string> {
  const fn = await loadExport<unknown, unknown>(taskModuleUrl(job.task), TASKS[job.task].fn);
  const out = await fn(decodePayload<unknown>(job.input));
  return encodePayload(out);
}
