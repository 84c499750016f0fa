// Re-runs (issue 4): the same inputs and options give byte-identical CSV, CIF and JSON (except the `run` field
// of landscape.json); a re-run with another tolerance reuses the cached invariants; Ctrl-C (SIGINT) in the
// middle of a run leaves the earlier outputs whole and no temporary files. Runs the real command line.
import { describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape } from '../src/demo/landscape.js';
import { sift } from '../src/landscape/sift.js';
import { siftFiles } from '../src/landscape/sift-files.js';

const cli = join(process.cwd(), 'src', 'cli.ts');
const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const polysift = (args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8' });

const gen = generateLandscape({ seed: 5, packings: 4, copiesPerPacking: 4, closePairs: 1 });
const dir = mkdtempSync(join(tmpdir(), 'polysift-rerun-'));
const cif = join(dir, 'run.cif');
const energies = join(dir, 'energies.csv');
writeFileSync(cif, gen.cif);
writeFileSync(energies, gen.energiesCsv);
const textFiles = ['structures.csv', 'unique.csv', 'unique.cif', 'convergence.csv'];

describe('sift re-runs', () => {
  it('gives byte-identical outputs for the same inputs, and reuses cached invariants with another tolerance', async () => {
    const base = { inputs: [cif], energiesFile: energies };
    const cacheDir = join(dir, 'cache');
    const a = await sift({ ...base, threads: 2, cacheDir });
    const b = await sift({ ...base, threads: 1 });
    const fa = new Map(siftFiles(a, { report: false }));
    const fb = new Map(siftFiles(b, { report: false }));
    for (const f of textFiles) expect(fb.get(f)).toBe(fa.get(f));
    const ja = JSON.parse(fa.get('landscape.json')!);
    const jb = JSON.parse(fb.get('landscape.json')!);
    expect(ja.run.createdAt).toMatch(/^\d{4}-\d\d-\d\dT/);
    delete ja.run;
    delete jb.run;
    expect(JSON.stringify(jb)).toBe(JSON.stringify(ja));
    expect(a.cache).toMatchObject({ hits: 0, misses: gen.ids.length, reused: [] });

    // From the cache, with the same options: the same files.
    const a2 = await sift({ ...base, threads: 2, cacheDir });
    expect(a2.cache).toMatchObject({ hits: gen.ids.length, misses: 0 });
    const fa2 = new Map(siftFiles(a2, { report: false }));
    for (const f of textFiles) expect(fa2.get(f)).toBe(fa.get(f));

    const c = await sift({ ...base, threads: 2, cacheDir, toleranceAngstrom: 0.08 });
    expect(c.cache).toMatchObject({ hits: gen.ids.length, misses: 0 });
    expect(c.landscape.parameters.toleranceAngstrom).toBe(0.08);
    // The first run searched pairs within twice its tolerance (0.04 Å by default), so 0.08 Å needs no new search;
    // here the kept set is unchanged too, so its neighbours and map come from the cache (4 kept structures are too few
    // for families of 5, so no matrix is needed).
    expect(c.cache.reused).toEqual(['pairs', 'element distances', 'kept neighbours', 'metric map']);
    expect(c.landscape.counts.kept).toBe(a.landscape.counts.kept);
    const d = await sift({ ...base, threads: 2, cacheDir, toleranceAngstrom: 0.08, minFamilySize: 3 });
    expect(d.cache.reused).toEqual(['pairs', 'element distances', 'kept neighbours', 'distance matrix', 'metric map']);
    const e = await sift({ ...base, threads: 2, cacheDir, toleranceAngstrom: 0.06, minFamilySize: 3 });
    expect(e.cache.reused).toEqual(['pairs', 'element distances', 'kept neighbours', 'families', 'metric map']);
    expect(e.landscape.structures.map((r) => r.family)).toEqual(d.landscape.structures.map((r) => r.family));
    // Cached invariants are the very numbers computed the first time.
    const ka = a.landscape.invariants.kept[0];
    const kc = c.landscape.invariants.kept.find((x) => x.index === ka.index)!;
    expect(kc.pddRows).toEqual(ka.pddRows);
  }, 40000);

  it('leaves earlier outputs whole and no temporary files when interrupted with SIGINT', async () => {
    const out = join(dir, 'a');
    const first = polysift(['sift', cif, '--energies', energies, '--out', out, '--quiet']);
    expect(first.status, first.stderr).toBe(0);
    const before = new Map(readdirSync(out).filter((f) => !f.startsWith('.')).map((f) => [f, readFileSync(join(out, f), 'utf8')]));
    // Without the cache the run takes a few seconds; interrupt it once it reports its second stage.
    // Node itself with the TypeScript loader (not the tsx launcher), so the signal reaches the sift process directly.
    const child = spawn(process.execPath, ['--import', 'tsx', cli, 'sift', cif, '--energies', energies, '--out', out, '--no-cache', '--tolerance', '0.03', '--threads', '1'], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stderr = '';
    let sent = false;
    const exit = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    child.stderr.on('data', (d: Buffer) => {
      stderr += d.toString();
      if (!sent && stderr.includes('building periodic sets')) {
        sent = true;
        child.kill('SIGINT');
      }
    });
    const code = await exit;
    expect(sent).toBe(true);
    expect(code).toBe(130);
    expect(stderr).toMatch(/interrupted/);
    const after = readdirSync(out).filter((f) => !f.startsWith('.'));
    expect(readdirSync(out).filter((f) => f.endsWith('.partial'))).toEqual([]);
    expect(new Set(after)).toEqual(new Set(before.keys()));
    for (const [f, text] of before) expect(readFileSync(join(out, f), 'utf8')).toBe(text);
  }, 40000);
});
