// Worker side of pool.ts: imports the requested module once and answers one message per input.
import { parentPort } from 'node:worker_threads';
import { restoreLargeViews } from './large-views.js';

type Fn = (input: unknown) => unknown;
const modules = new Map<string, Record<string, Fn>>();

parentPort!.on('message', async (msg: { id: number; moduleUrl: string; fnName: string; input: unknown }) => {
  try {
    let mod = modules.get(msg.moduleUrl);
    if (!mod) {
      mod = (await import(msg.moduleUrl)) as Record<string, Fn>;
      modules.set(msg.moduleUrl, mod);
    }
    const fn = mod[msg.fnName];
    if (typeof fn !== 'function') throw new Error(`${msg.moduleUrl} has no export named ${msg.fnName}`);
    const result = await fn(restoreLargeViews(msg.input));
    parentPort!.postMessage({ id: msg.id, result });
  } catch (err) {
    parentPort!.postMessage({ id: msg.id, error: err instanceof Error ? `${err.message}\n${err.stack ?? ''}` : String(err) });
  }
});
