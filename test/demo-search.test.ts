// The demo's mini structure search (src/demo/search): random packings of the invented molecule relaxed under an
// exp-6 pair potential. Checked against: the definition of a descent method and the first-order condition at a
// minimum (Nocedal & Wright, "Numerical Optimization", Springer 2006: every accepted step lowers the objective; the
// gradient vanishes at a minimum), central finite differences of the energy (common practice), a brute-force
// P1 pair sum, the invariance of a lattice sum under a change of cell (International Tables Vol. A, chapter on
// transformations), the reader and density code of src/io and src/geometry, and the library sift.
import { beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runMiniSearch, runMiniSearchInWorkers, startFrom, startSeed, type MiniSearchResult } from '../src/demo/search/search.js';
import { energyAt, makeRelaxModel, reduceCell, stateEnergy, variablesOf, GRADIENT_TOLERANCE } from '../src/demo/search/relax.js';
import { energyOfAtoms } from '../src/demo/search/lattice-energy.js';
import { atomPairEnergy, pairTable, COULOMB_KJ_A_PER_MOL, CUTOFF_ANGSTROM } from '../src/demo/search/potential.js';
import { orvazinone } from '../src/demo/molecule.js';
import { makeRng } from '../src/demo/prng.js';
import { basisFromCell, cellFromBasis, inverse, vecMat } from '../src/demo/mat3.js';
import { changeBasis, expandToP1, randomUnimodular, shiftOrigin, type Expressed } from '../src/demo/rewrite.js';
import { readCifText } from '../src/io/read.js';
import { crystalFacts } from '../src/geometry/facts.js';
import { sift } from '../src/landscape/sift.js';
import type { RigidState } from '../src/demo/search/relax.js';

const mol = orvazinone();
const table = pairTable(mol);

/** Molecule 0 of a state as CIF-like data: basis, the group's operations and the atoms' fractional coordinates. */
function expressed(s: RigidState): Expressed {
  const model = makeRelaxModel(s.group, mol, table);
  const basis = basisFromCell(...s.cell);
  const inv = inverse(basis);
  const c = vecMat(s.centreFrac, basis);
  const frac = new Float64Array(mol.xyz.length);
  for (let i = 0; i < mol.elements.length; i++) {
    const [x, y, z] = [mol.xyz[3 * i], mol.xyz[3 * i + 1], mol.xyz[3 * i + 2]];
    const o = s.orient;
    frac.set(vecMat([c[0] + o[0] * x + o[1] * y + o[2] * z, c[1] + o[3] * x + o[4] * y + o[5] * z, c[2] + o[6] * x + o[7] * y + o[8] * z], inv), 3 * i);
  }
  return { basis, ops: model.ops, frac, elements: mol.elements.slice(), atomsPerMolecule: mol.elements.length };
}

function opsCount(group: RigidState['group']): number {
  return makeRelaxModel(group, mol, table).ops.length;
}

function numericalGradient(f: (x: Float64Array) => number, x: Float64Array, h: number): Float64Array {
  const g = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    const up = Float64Array.from(x);
    const dn = Float64Array.from(x);
    up[i] += h;
    dn[i] -= h;
    g[i] = (f(up) - f(dn)) / (2 * h);
  }
  return g;
}

describe('demo mini search', () => {
  let r: MiniSearchResult;
  beforeAll(() => {
    r = runMiniSearch({ seed: 5, starts: 40 });
  });

  it('is deterministic from its seed and accounts for every start', () => {
    const again = runMiniSearch({ seed: 5, starts: 10 });
    const first10 = runMiniSearch({ seed: 5, starts: 10 });
    expect(again.cif).toBe(first10.cif);
    expect(again.energiesCsv).toBe(first10.energiesCsv);
    expect(r.structures.length + r.rejected.length).toBe(40);
    // Rejections (clashing starts, unconverged or collapsed runs) were about 4% when measured; most starts must survive.
    expect(r.structures.length).toBeGreaterThanOrEqual(30);
    expect(new Set(r.groups)).toEqual(new Set(['P21/c', 'P-1', 'P212121', 'C2/c', 'P21']));
    expect(r.cif.match(/^data_/gm)?.length).toBe(r.ids.length);
    expect(r.energiesCsv.trim().split('\n')).toEqual(['id,energy', ...r.ids.map((id, i) => `${id},${r.energiesKjPerMol[i].toFixed(4)}`)]);
  });

  it('gives the same CIF when its starts are relaxed in two worker threads (each start has its own seeded stream)', async () => {
    const inWorkers = await runMiniSearchInWorkers({ seed: 5, starts: 24, threads: 2 });
    const here = runMiniSearch({ seed: 5, starts: 24 });
    expect(inWorkers.cif).toBe(here.cif);
    expect(inWorkers.energiesCsv).toBe(here.energiesCsv);
    expect(inWorkers.rejected).toEqual(here.rejected);
    // neighbouring starts draw from unrelated streams
    expect(new Set(Array.from({ length: 1000 }, (_x, s) => startSeed(5, s))).size).toBe(1000);
  }, 120_000);

  it('the molecule is neutral and the Coulomb constant is e^2 N_A / (4 pi eps0) from CODATA 2018 constants', () => {
    // A neutral molecule keeps the shifted-force charge sum from depending on how the cutoff cuts molecules.
    expect(Math.abs(mol.charges.reduce((a, q) => a + q, 0))).toBeLessThan(1e-12);
    expect(mol.charges.length).toBe(mol.elements.length);
    // CODATA 2018: e = 1.602176634e-19 C (exact), N_A = 6.02214076e23 /mol (exact), eps0 = 8.8541878128e-12 F/m.
    const e = 1.602176634e-19;
    const kJPerMolAngstrom = ((e * e) / (4 * Math.PI * 8.8541878128e-12)) * 6.02214076e23 * 1e10 / 1000;
    expect(Math.abs(COULOMB_KJ_A_PER_MOL - kJPerMolAngstrom) / kJPerMolAngstrom).toBeLessThan(1e-8);
  });

  it('every relaxed structure ends lower than its start (a descent method)', () => {
    for (const s of r.structures) expect(s.energyKjPerMol).toBeLessThan(s.startEnergyKjPerMol);
  });

  it('the numerical gradient at every end point is small (first-order condition at a minimum)', () => {
    for (const s of r.structures) {
      const model = makeRelaxModel(s.group, mol, table);
      const x = variablesOf(model, s.state);
      const g = numericalGradient((y) => energyAt(model, s.state, y), x, 1e-5);
      // The optimiser stops below GRADIENT_TOLERANCE; central differences add ~1e-6.
      expect(Math.max(...Array.from(g, Math.abs))).toBeLessThan(2 * GRADIENT_TOLERANCE);
    }
  });

  it('the analytic gradient matches central differences away from minima', () => {
    const rng = makeRng(99);
    for (const group of ['P21/c', 'P-1', 'P212121', 'C2/c', 'P21'] as const) {
      const model = makeRelaxModel(group, mol, table);
      const start = startFrom(group, mol, rng);
      if (!start) continue;
      const x = variablesOf(model, start);
      for (let i = 0; i < x.length; i++) x[i] += 0.2 * (rng.next() - 0.5);
      const g = new Float64Array(x.length);
      const e = energyAt(model, start, x, g);
      expect(Number.isFinite(e)).toBe(true);
      const num = numericalGradient((y) => energyAt(model, start, y), x, 1e-5);
      for (let i = 0; i < x.length; i++) expect(Math.abs(g[i] - num[i])).toBeLessThan(1e-5 * Math.max(1, Math.abs(num[i])));
    }
  });

  it('energies and densities are in the usual ranges of small organic crystals', () => {
    // Lattice energies of small rigid organic molecules: negative, tens up to ~150 kJ/mol (common practice);
    // densities of organic molecular crystals roughly 1.1–1.6 g/cm3 (common practice), allowed 1.0–1.8 here.
    for (let i = 0; i < r.ids.length; i++) {
      expect(r.energiesKjPerMol[i]).toBeLessThan(-10);
      expect(r.energiesKjPerMol[i]).toBeGreaterThan(-150);
      expect(r.densitiesGPerCm3[i]).toBeGreaterThan(1.0);
      expect(r.densitiesGPerCm3[i]).toBeLessThan(1.8);
    }
  });

  it('the fast lattice sum equals a brute-force pair sum over the P1 expansion', () => {
    const s = r.structures[0];
    const e = expressed(s.state);
    const p1 = expandToP1(e);
    const n = mol.elements.length;
    const atoms = p1.frac.length / 3;
    const b = p1.basis;
    // Every pair (atom of molecule 0, atom of another molecule image) within the cutoff, translations in a wide box.
    const range = [0, 1, 2].map((k) => Math.ceil((CUTOFF_ANGSTROM + 10) * Math.hypot(...[0, 1, 2].map((r2) => inverse(b)[3 * r2 + k]))));
    let sum = 0;
    for (let i = 0; i < n; i++)
      for (let j = 0; j < atoms; j++)
        for (let u = -range[0]; u <= range[0]; u++)
          for (let v = -range[1]; v <= range[1]; v++)
            for (let w = -range[2]; w <= range[2]; w++) {
              if (j < n && u === 0 && v === 0 && w === 0) continue;
              const d = [0, 1, 2].map((c) => p1.frac[3 * j + c] - p1.frac[3 * i + c] + [u, v, w][c]);
              const x = vecMat(d, b);
              const dist = Math.hypot(x[0], x[1], x[2]);
              if (dist < CUTOFF_ANGSTROM) sum += 0.5 * atomPairEnergy(table, i, j % n, dist);
            }
    expect(Math.abs(sum - s.energyKjPerMol)).toBeLessThan(1e-8);
  });

  it('the energy does not depend on the cell, setting or origin the crystal is written in (to 1e-8 kJ/mol)', () => {
    const rng = makeRng(3);
    for (const s of r.structures.slice(0, 10)) {
      const e = expressed(s.state);
      const e0 = energyOfAtoms(table, e.ops!, e.basis, e.frac);
      expect(Math.abs(e0 - s.energyKjPerMol)).toBeLessThan(1e-8);
      // A random unimodular matrix can be the identity; draw again until the cell really changes.
      let p = randomUnimodular(rng, e.basis);
      for (let tries = 0; tries < 20 && p.every((v, k) => v === (k % 4 === 0 ? 1 : 0)); tries++) p = randomUnimodular(rng, e.basis);
      const other = shiftOrigin(changeBasis(e, p), [rng.int(12) / 12, rng.int(12) / 12, rng.int(12) / 12]);
      expect(other.basis).not.toEqual(e.basis);
      expect(Math.abs(energyOfAtoms(table, other.ops!, other.basis, other.frac) - e0)).toBeLessThan(1e-8);
      // In the optimiser's own variables: a monoclinic cell sheared to c' = c + 2a (a, b and the Cartesian frame
      // unchanged, so only the centre's fractional coordinates change, f' = f P^-1) has the same energy, and
      // reduceCell takes it back to the less oblique cell.
      if (s.group === 'P21/c' || s.group === 'C2/c' || s.group === 'P21') {
        const model = makeRelaxModel(s.group, mol, table);
        const l = basisFromCell(...s.state.cell);
        const sheared = [l[0], l[1], l[2], l[3], l[4], l[5], l[6] + 2 * l[0], l[7] + 2 * l[1], l[8] + 2 * l[2]];
        const f = s.state.centreFrac;
        const oblique: RigidState = { ...s.state, cell: cellFromBasis(sheared), centreFrac: [f[0] - 2 * f[2], f[1], f[2]] };
        expect(Math.abs(stateEnergy(model, oblique) - s.energyKjPerMol)).toBeLessThan(1e-8);
        const back = reduceCell(model, oblique);
        expect(back.cell[2]).toBeLessThan(oblique.cell[2]);
        expect(Math.abs(stateEnergy(model, back) - s.energyKjPerMol)).toBeLessThan(1e-8);
      }
    }
  });

  it('the CIF reads back into records with the same ids, Z and densities', () => {
    const blocks = readCifText(r.cif, 'search.cif');
    expect(blocks.every((b) => b.kind === 'record')).toBe(true);
    blocks.forEach((b, i) => {
      if (b.kind !== 'record') return;
      expect(b.record.id).toBe(r.ids[i]);
      expect(b.record.opsOrigin).toBe('listed');
      const facts = crystalFacts(b.record);
      expect(facts.z).toBe(b.record.ops.length);
      expect(facts.zPrime).toBe(1);
      // Cell lengths are written to 1e-5 Å and angles to 1e-4 degrees, so the volume agrees to about 1e-5.
      expect(Math.abs(facts.densityGPerCm3 - r.densitiesGPerCm3[i]) / r.densitiesGPerCm3[i]).toBeLessThan(1e-4);
    });
  });

  it('gemmi reads the CIF to the same densities and atom counts (independent reference, scripts/amd-gemmi.py)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'polysift-search-gemmi-'));
    const file = join(dir, 'search.cif');
    writeFileSync(file, r.cif);
    const run = spawnSync('python3', ['scripts/amd-gemmi.py', file, '5'], { encoding: 'utf8' });
    if (run.status !== 0) throw new Error(`scripts/amd-gemmi.py failed (needs python3 with numpy and /usr/bin/python3 with gemmi): ${run.stderr}`);
    const ref = run.stdout.trim().split('\n').map((line) => JSON.parse(line) as { id: string; density: number; atoms: number });
    expect(ref.map((x) => x.id)).toEqual(r.ids);
    ref.forEach((x, i) => {
      expect(Math.abs(x.density - r.densitiesGPerCm3[i]) / r.densitiesGPerCm3[i]).toBeLessThan(1e-4);
      expect(x.atoms).toBe(mol.elements.length * opsCount(r.structures[i].group));
    });
  });

  it('sift keeps fewer structures than starts, every duplicate within tolerance and the same minimum', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'polysift-search-'));
    writeFileSync(join(dir, 'search.cif'), r.cif);
    writeFileSync(join(dir, 'energies.csv'), r.energiesCsv);
    const run = await sift({ inputs: [join(dir, 'search.cif')], energiesFile: join(dir, 'energies.csv'), threads: 1, cacheDir: null });
    const l = run.landscape;
    const tol = l.parameters.toleranceAngstrom;
    expect(l.structures.length).toBe(r.ids.length);
    expect(l.structures.every((x) => x.status === 'kept' || x.status === 'duplicate')).toBe(true);
    const duplicates = l.structures.filter((x) => x.status === 'duplicate');
    expect(l.counts.kept).toBeLessThan(r.starts);
    expect(duplicates.length).toBeGreaterThan(0);
    for (const d of duplicates) {
      expect(d.distanceToKept!).toBeLessThanOrEqual(tol);
      const k = l.structures[d.keptIndex!];
      // The same minimum reached twice: energies within optimiser noise (hundredths of a kJ/mol; see DESIGN facts).
      expect(Math.abs(d.energy! - k.energy!)).toBeLessThan(0.1);
    }
  });
});
