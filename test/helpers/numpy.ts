// numpy, the reference library, run on JSON input from a test: `d` holds the input, the script prints JSON.
// A missing python3 or numpy fails the test with a clear message (never a silent skip).
import { spawnSync } from 'node:child_process';

export function numpy(script: string, input: unknown): unknown {
  const r = spawnSync('python3', ['-c', `import json,sys\nimport numpy as np\nd=json.load(sys.stdin)\n${script}`], {
    input: JSON.stringify(input),
    encoding: 'utf8',
  });
  if (r.error || r.status !== 0) throw new Error(`python3 with numpy is needed for this test: ${r.error?.message ?? r.stderr}`);
  return JSON.parse(r.stdout);
}
