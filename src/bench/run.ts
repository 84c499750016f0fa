// `npm run bench`: runs every benchmark module in this folder (each exports `run(): Promise<void>`)
// and prints its figures. Pass names to run a subset: `node dist/bench/run.js emd sift`.
import { readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const here = fileURLToPath(new URL('.', import.meta.url));
const wanted = process.argv.slice(2);
const order = ['cif', 'invariants', 'emd', 'graph', 'sift', 'report'];
const names = readdirSync(here)
  .filter((f) => f.endsWith('.js') && f !== 'run.js' && !f.startsWith('_'))
  .map((f) => f.slice(0, -3))
  // The 100k sift runs only when asked for by name (it takes minutes, plus its landscape's generation once).
  .filter((n) => (wanted.length === 0 ? n !== 'sift-100k' : wanted.includes(n)))
  .sort((a, b) => (order.indexOf(a) + 1 || 99) - (order.indexOf(b) + 1 || 99) || a.localeCompare(b));

for (const name of names) {
  const mod = (await import(new URL(`./${name}.js`, import.meta.url).href)) as { run?: () => Promise<void> };
  if (typeof mod.run !== 'function') continue;
  process.stdout.write(`\n== ${name} ==\n`);
  await mod.run();
}
