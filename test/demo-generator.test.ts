// The labelled landscape generator, checked against an independent reference: Debian's gemmi expands each
// block's symmetry and numpy computes AMD ("Average minimum distances of periodic point sets", MATCH Commun.
// Math. Comput. Chem. 2022) and density (scripts/amd-gemmi.py). Copies of one packing must be the same crystal
// up to optimiser noise; distinct packings must differ.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateLandscape } from '../src/demo/landscape.js';
import { makeRng } from '../src/demo/prng.js';

const options = { seed: 11, packings: 8, copiesPerPacking: 6, closePairs: 2 };

function referenceAmd(cif: string, k: number): Array<{ id: string; density: number; atoms: number; amd: number[] }> {
  const dir = mkdtempSync(join(tmpdir(), 'polysift-gen-'));
  const file = join(dir, 'landscape.cif');
  writeFileSync(file, cif);
  const run = spawnSync('python3', ['scripts/amd-gemmi.py', file, String(k)], { encoding: 'utf8' });
  if (run.status !== 0) throw new Error(`scripts/amd-gemmi.py failed (needs python3 with numpy and /usr/bin/python3 with gemmi): ${run.stderr}`);
  return run.stdout.trim().split('\n').map((l) => JSON.parse(l));
}

describe('landscape generator', () => {
  const g = generateLandscape(options);

  it('is deterministic from its seed', () => {
    const again = generateLandscape(options);
    expect(again.cif).toBe(g.cif);
    expect(again.energiesCsv).toBe(g.energiesCsv);
    expect(generateLandscape({ ...options, seed: 12 }).cif).not.toBe(g.cif);
  });

  it('writes K packings, each several times, in every way a search finds them again', () => {
    expect(g.ids.length).toBe(options.packings * options.copiesPerPacking);
    expect(new Set(g.truth).size).toBe(options.packings);
    expect(new Set(g.kinds)).toEqual(new Set(['standard', 'symbol-only', 'other-cell', 'other-setting', 'p1', 'p1-supercell']));
    expect(g.cif.match(/^data_/gm)?.length).toBe(g.ids.length);
    expect(g.cif).toContain("'P 1 21/n 1'");
    expect(g.energiesCsv.split('\n')[0]).toBe('id,energy');
  });

  it('makes close distinct pairs within 0.1 kJ/mol and 0.005 g/cm3', () => {
    expect(g.closePairs.length).toBe(options.closePairs);
    for (const [a, b] of g.closePairs) {
      expect(Math.abs(g.packings[a].energyKjPerMol - g.packings[b].energyKjPerMol)).toBeLessThan(0.1);
      expect(Math.abs(g.packings[a].densityGPerCm3 - g.packings[b].densityGPerCm3)).toBeLessThan(0.005);
    }
  });

  it('copies are the same crystal and distinct packings differ, by gemmi + numpy AMD', () => {
    const ref = referenceAmd(g.cif, 30);
    expect(ref.map((r) => r.id)).toEqual(g.ids);
    let maxWithin = 0;
    let minBetween = Infinity;
    for (let i = 0; i < ref.length; i++) {
      // Organic crystals: about 1.1–1.6 g/cm3 (common practice).
      expect(ref[i].density).toBeGreaterThan(1.1);
      expect(ref[i].density).toBeLessThan(1.6);
      for (let j = i + 1; j < ref.length; j++) {
        let d = 0;
        for (let c = 0; c < 30; c++) d = Math.max(d, Math.abs(ref[i].amd[c] - ref[j].amd[c]));
        if (g.truth[i] === g.truth[j]) maxWithin = Math.max(maxWithin, d);
        else minBetween = Math.min(minBetween, d);
      }
    }
    console.log(`generator check: AMD L-inf within copies <= ${maxWithin.toFixed(4)} Å, between packings >= ${minBetween.toFixed(4)} Å`);
    // Noise of 0.002 Å per coordinate moves each distance by well under 0.02 Å (continuity: at most 2 x the largest displacement).
    expect(maxWithin).toBeLessThan(0.02);
    expect(minBetween).toBeGreaterThan(2 * maxWithin);
  }, 30000);
});

describe('seeded generator', () => {
  it('gives uniform deviates in [0, 1) with mean near 1/2 and normal deviates with unit spread', () => {
    const rng = makeRng(5);
    let s = 0;
    let s2 = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) {
      const u = rng.next();
      expect(u).toBeGreaterThanOrEqual(0);
      expect(u).toBeLessThan(1);
      s += u;
      const z = rng.normal(1);
      s2 += z * z;
    }
    // Mean of U(0,1) is 1/2 with standard error 0.29/sqrt(n) ~ 0.002; variance of N(0,1) is 1.
    expect(Math.abs(s / n - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(s2 / n - 1)).toBeLessThan(0.05);
  });
});
