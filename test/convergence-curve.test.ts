// convergenceCurve: distinct low-energy structures against candidates processed, and the growth statement.
// The expected counts come from the definition in src/landscape/convergence.ts, recounted here by brute force
// (a set of groups per prefix), and from small runs worked out by hand.
import { describe, expect, it } from 'vitest';
import {
  convergenceCsv,
  convergenceCsvHeader,
  convergenceCurve,
  defaultWindows,
  fromKjPerMol,
} from '../src/landscape/convergence.js';
import type { ConvergenceCurve, StructureRow } from '../src/landscape/schema.js';
import { seededUniform } from '../src/demo/prng.js';

/** A structure row with only the fields the curve reads filled in meaningfully. */
function row(index: number, status: StructureRow['status'], keptIndex: number | null, energyRel: number | null): StructureRow {
  return {
    index, id: `s${index}`, source: `run.cif#s${index}`, file: 'run.cif', block: `s${index}`, line: 1 + index * 40,
    status, reason: status === 'rejected' ? 'unreadable' : '', energy: energyRel === null ? null : -100 + energyRel,
    energyRel, densityGPerCm3: 1.3, atoms: 48, spaceGroup: 'P21/c', symmetry: null, cell: null, z: 4, zPrime: 1, formulas: ['C6H6'], composition: 'CH', flags: [], otherChemistryIndex: null, otherChemistry: null, otherComposition: null, otherChemistryDistance: null, energyOffset: null, flatPartnerIndices: [], flatPartners: [], flatPartnerDistance: null,
    keptIndex, duplicateOf: status === 'duplicate' && keptIndex !== null ? `s${keptIndex}` : null,
    distanceToKept: status === 'kept' ? 0 : status === 'duplicate' ? 0.01 : null, family: -1, nearestIndex: null,
    nearest: null, nearestDistance: null, nnDistance: null, members: status === 'kept' ? 1 : 0, writtenIn: [], notes: [],
  };
}

/**
 * An invented run of `n` candidates: new distinct minima keep appearing until candidate `lastNew`
 * (inclusive), after that every candidate is a re-found duplicate of an earlier minimum (or a rejected file).
 * The kept structure of a group is its lowest-energy member, which need not be its first member.
 */
function generatedRun(n: number, lastNew: number, seed: number): StructureRow[] {
  const r = seededUniform(seed);
  const groupOf = new Int32Array(n).fill(-1);
  const groupEnergy: number[] = [];
  const groupMembers: number[][] = [];
  for (let i = 0; i < n; i++) {
    if (r() < 0.05) continue; // rejected candidate
    const fresh = i < lastNew && (groupMembers.length === 0 || r() < 0.5);
    if (fresh) {
      groupEnergy.push(r() * 30); // energies above the lowest spread over 0–30 kJ/mol
      groupMembers.push([i]);
      groupOf[i] = groupMembers.length - 1;
    } else {
      const g = Math.floor(r() * groupMembers.length);
      groupMembers[g].push(i);
      groupOf[i] = g;
    }
  }
  // The kept structure of each group: a random member (stands for "lowest energy after noise").
  const keptOfGroup = groupMembers.map((m) => m[Math.floor(r() * m.length)]);
  const rows: StructureRow[] = [];
  for (let i = 0; i < n; i++) {
    const g = groupOf[i];
    if (g < 0) rows.push(row(i, 'rejected', null, null));
    else {
      const k = keptOfGroup[g];
      rows.push(row(i, k === i ? 'kept' : 'duplicate', k, k === i ? groupEnergy[g] : groupEnergy[g] + 0.01));
    }
  }
  return rows;
}

/** Brute-force count after `processed` candidates: groups with a member among them, kept energy within w. */
function bruteCounts(rows: StructureRow[], processed: number, windows: number[]): number[] {
  const groups = new Set<number>();
  for (let i = 0; i < processed; i++) {
    const s = rows[i];
    if ((s.status === 'kept' || s.status === 'duplicate') && s.keptIndex !== null) groups.add(s.keptIndex);
  }
  return windows.map((w) => [...groups].filter((g) => (rows[g].energyRel as number) <= w).length);
}

/** Read the curve at any `processed` by straight lines between its points (exact for the staircase corners). */
function curveAt(curve: ConvergenceCurve, processed: number): number[] {
  const pts = curve.points;
  for (let j = 0; j < pts.length; j++) {
    if (pts[j].processed === processed) return pts[j].counts;
    if (pts[j].processed > processed) {
      const a = pts[j - 1];
      const b = pts[j];
      const t = (processed - a.processed) / (b.processed - a.processed);
      return a.counts.map((c, w) => c + t * (b.counts[w] - c));
    }
  }
  throw new Error(`processed ${processed} beyond the curve`);
}

describe('convergenceCurve', () => {
  it('counts a small run worked out by hand', () => {
    // Candidates: 0 kept (0 kJ/mol), 1 rejected, 2 duplicate of 4, 3 duplicate of 0, 4 kept (7), 5 kept (15).
    // Group of 4 counts from candidate 3 (its first member, index 2), not from 4 itself.
    const rows = [
      row(0, 'kept', 0, 0), row(1, 'rejected', null, null), row(2, 'duplicate', 4, 7.2),
      row(3, 'duplicate', 0, 0.1), row(4, 'kept', 4, 7), row(5, 'kept', 5, 15),
    ];
    const curve = convergenceCurve(rows, [5, 10, 20]);
    expect(curve).not.toBeNull();
    const c = curve as ConvergenceCurve;
    expect(c.windows).toEqual([5, 10, 20]);
    expect(c.points).toEqual([
      { processed: 0, counts: [0, 0, 0] },
      { processed: 1, counts: [1, 1, 1] },
      { processed: 2, counts: [1, 1, 1] },
      { processed: 3, counts: [1, 2, 2] },
      { processed: 5, counts: [1, 2, 2] },
      { processed: 6, counts: [1, 2, 3] },
    ]);
    // Last 25% of 6 candidates: candidates floor(6*0.75)+1 = 5 to 6; nothing within 5 kJ/mol appeared there,
    // the only such structure (index 0) was first met at candidate 1.
    expect(c.stillGrowing).toBe(false);
    expect(c.statement).toMatch(/^Not growing/);
    expect(c.statement).toContain('candidate 1');
  });

  it('agrees with a brute-force recount at every candidate of a generated run', () => {
    const rows = generatedRun(400, 300, 7);
    const windows = [5, 10, 20];
    const curve = convergenceCurve(rows, windows) as ConvergenceCurve;
    for (let p = 0; p <= rows.length; p++) expect(curveAt(curve, p)).toEqual(bruteCounts(rows, p, windows));
    expect(curve.points.length).toBeLessThanOrEqual(2 * rows.filter((s) => s.status === 'kept').length + 2);
  });

  it('is flat over the second half of a run whose new structures stop halfway, and says so', () => {
    const rows = generatedRun(600, 300, 11);
    const curve = convergenceCurve(rows, [5, 10, 20]) as ConvergenceCurve;
    const atHalf = curveAt(curve, 300);
    expect(atHalf[0]).toBeGreaterThan(0);
    for (let p = 300; p <= 600; p++) expect(curveAt(curve, p)).toEqual(atHalf);
    // and not flat in the first half: the generator adds distinct minima there
    expect(curveAt(curve, 150)[2]).toBeLessThan(atHalf[2]);
    expect(curve.stillGrowing).toBe(false);
    expect(curve.statement).toMatch(/^Not growing: no new distinct structure within 5 kJ\/mol .* last 150 of 600 candidates/);
  });

  it('says a run still finding new low-energy structures near its end is growing', () => {
    const rows = generatedRun(600, 600, 11);
    const curve = convergenceCurve(rows, [5, 10, 20]) as ConvergenceCurve;
    const lowNewInTail = bruteCounts(rows, 600, [5])[0] - bruteCounts(rows, 450, [5])[0];
    expect(lowNewInTail).toBeGreaterThan(0);
    expect(curve.stillGrowing).toBe(true);
    expect(curve.statement).toContain(`Still growing: ${lowNewInTail} of the ${bruteCounts(rows, 600, [5])[0]}`);
  });

  it('returns null when no kept structure has an energy', () => {
    const rows = [row(0, 'kept', 0, null), row(1, 'duplicate', 0, null), row(2, 'rejected', null, null)];
    expect(convergenceCurve(rows, [5, 10, 20])).toBeNull();
  });

  it('refuses rows out of input order and empty windows with a clear message', () => {
    const rows = [row(1, 'kept', 1, 0), row(0, 'kept', 0, 3)];
    expect(() => convergenceCurve(rows, [5])).toThrow(/input order: position 0 holds structure index 1/);
    expect(() => convergenceCurve([row(0, 'kept', 0, 0)], [])).toThrow(/at least one energy window/);
  });

  it('writes convergence.csv with processed then one count column per window, the unit in snake_case in each name', () => {
    // Headers follow the project's table convention (units as lower-case suffixes, README "Tables").
    const rows = [row(0, 'kept', 0, 0), row(1, 'kept', 1, 8), row(2, 'duplicate', 1, 8.1)];
    const curve = convergenceCurve(rows, [10, 5]) as ConvergenceCurve;
    expect(convergenceCsvHeader(curve.windows, 'kJ/mol')).toEqual(['processed', 'within_5_kj_per_mol', 'within_10_kj_per_mol']);
    expect(convergenceCsvHeader([1.2, 2.4], 'kcal/mol')).toEqual(['processed', 'within_1.2_kcal_per_mol', 'within_2.4_kcal_per_mol']);
    expect(convergenceCsvHeader([0.05], 'eV')).toEqual(['processed', 'within_0.05_ev']);
    expect(convergenceCsv(curve, 'kJ/mol')).toBe(
      'processed,within_5_kj_per_mol,within_10_kj_per_mol\n0,0,0\n1,1,1\n2,1,2\n3,1,2\n',
    );
  });

  it('converts the default windows into other energy units', () => {
    // 1 kcal = 4.184 kJ (thermochemical calorie, NIST SP 811, 2008); 1 eV per molecule = 96.485 332 12 kJ/mol
    // (e × N_A, CODATA 2018).
    expect(fromKjPerMol(4.184, 'kcal/mol')).toBeCloseTo(1, 12);
    expect(fromKjPerMol(96.48533212, 'eV')).toBeCloseTo(1, 12);
    expect(defaultWindows('kJ/mol')).toEqual([5, 10, 20]);
    expect(defaultWindows('kcal/mol')).toEqual([1.195, 2.39, 4.78]);
    expect(defaultWindows('eV')).toEqual([0.05182, 0.1036, 0.2073]);
  });
});
