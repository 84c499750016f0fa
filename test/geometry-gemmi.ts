// Live reference calls into gemmi (Debian's python3-gemmi, run as /usr/bin/python3), used by the
// geometry tests. A missing gemmi is a test failure with a clear message, never a silent skip.
import { spawnSync } from 'node:child_process';

export const GEMMI_PYTHON = '/usr/bin/python3';

/** Run a Python snippet that imports gemmi and prints one JSON value; return it parsed. */
export function gemmiJson<T>(code: string): T {
  const r = spawnSync(GEMMI_PYTHON, ['-c', `import gemmi, json\n${code}`], { encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.error) throw new Error(`cannot run ${GEMMI_PYTHON} for the gemmi reference check: ${r.error.message}`);
  if (r.status !== 0) {
    throw new Error(`the gemmi reference check failed (is Debian's python3-gemmi installed? .ci/run installs it):\n${r.stderr}`);
  }
  return JSON.parse(r.stdout) as T;
}

/** An operation as gemmi reports it: rotation and translation in 24ths (gemmi.Op.DEN). */
export interface GemmiOp {
  rot: number[][];
  tran: number[];
}

/** Python expression body that turns a gemmi GroupOps `g` into a JSON-able list. */
export const GEMMI_OPS_TO_LIST = '[{"rot": o.rot, "tran": [t % 24 for t in o.tran]} for o in g]';
