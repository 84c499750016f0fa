// convergenceCurve: distinct low-energy structures against candidates processed, and the growth statement.
// The expected counts come from the definition in src/landscape/convergence.ts, recounted here by brute force
// (a set of groups per prefix), and from small runs worked out by hand.
import { describe, expect, it } from 'vitest';
import {
  convergenceCsv,
  convergenceCsvHeader,
  convergenceCurve,
  convergenceVerdict,
  defaultWindows,
  GROWING_SHARE,
  LEVELLED_SHARE,
  MIN_NEW_GROWING,
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

/** `count` candidate numbers (1-based) spread evenly over [from, to]. */
function spread(count: number, from: number, to: number): number[] {
  if (count === 1) return [from];
  return Array.from({ length: count }, (_x, i) => Math.round(from + ((to - from) * i) / (count - 1)));
}

/**
 * An invented run of `n` candidates in which the distinct structures within 5 kJ/mol are first met at the candidate
 * numbers `lowFirst`, plus the lowest one (energy 0) at candidate `lowestAt` (default 1); others (at 15 kJ/mol) at
 * `highFirst`, moved to the next free candidate when taken. Every other candidate re-finds the structure met at
 * candidate 1, which must be one of the first finds.
 */
function runWithFirstFinds(n: number, lowFirst: number[], highFirst: number[], lowestAt = 1): StructureRow[] {
  const rows: StructureRow[] = [];
  const firsts = new Map<number, number>();
  firsts.set(lowestAt, 0);
  lowFirst.forEach((c, g) => firsts.set(c, 1 + (g % 40) * 0.1));
  if (firsts.size !== 1 + lowFirst.length) throw new Error('runWithFirstFinds: two low-energy groups share a first candidate');
  for (let c of highFirst) {
    while (firsts.has(c)) c++;
    if (c > n) throw new Error('runWithFirstFinds: no free candidate left for a higher group');
    firsts.set(c, 15);
  }
  if (!firsts.has(1)) throw new Error('runWithFirstFinds: candidate 1 must be a first find');
  for (let i = 0; i < n; i++) {
    const e = firsts.get(i + 1);
    rows.push(e === undefined ? row(i, 'duplicate', 0, firsts.get(1)! + 0.01) : row(i, 'kept', i, e));
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
    expect(c.verdict).toBe('levelled-off');
    expect(c.tail).toEqual({ fraction: 0.25, candidates: 2, withinLowest: 1, newWithinLowest: 0, lowestFirstFoundAt: 1 });
    expect(c.statement).toMatch(/^Levelled off: none of the 1 distinct structures within 5 kJ\/mol/);
    expect(c.statement).toContain('first found at candidate 1.');
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
    expect(curve.verdict).toBe('levelled-off');
    expect(curve.statement).toMatch(/^Levelled off: none of the \d+ distinct structures within 5 kJ\/mol .* last 150 of 600 candidates/);
  });

  it('says a run still finding new low-energy structures near its end is growing', () => {
    const rows = generatedRun(600, 600, 11);
    const curve = convergenceCurve(rows, [5, 10, 20]) as ConvergenceCurve;
    const lowNewInTail = bruteCounts(rows, 600, [5])[0] - bruteCounts(rows, 450, [5])[0];
    expect(lowNewInTail).toBeGreaterThan(0);
    const lowTotal = bruteCounts(rows, 600, [5])[0];
    // a steady run meets about a quarter of them in its last quarter: well above the 10% and 3 the rule asks
    expect(lowNewInTail).toBeGreaterThanOrEqual(3);
    expect(lowNewInTail / lowTotal).toBeGreaterThanOrEqual(0.1);
    expect(curve.stillGrowing).toBe(true);
    expect(curve.verdict).toBe('growing');
    expect(curve.statement).toContain(`Still growing: ${lowNewInTail} of the ${lowTotal} distinct structures within 5 kJ/mol`);
  });

  describe('the verdict rule (README, "Convergence")', () => {
    // The two cases issue 14 names: a 10,000-structure search with 1 of 107 low-energy structures new in its last
    // quarter (a practitioner calls it converged), and the old demo with 27 of 164 new there (still growing).
    it('calls 1 new of 107 within 5 kJ/mol in the last quarter of 10,000 candidates levelled off', () => {
      const rows = runWithFirstFinds(10000, [...spread(105, 2, 7400), 9000], spread(900, 3, 9990));
      const c = convergenceCurve(rows, [5, 10, 20]) as ConvergenceCurve;
      expect(c.tail).toEqual({ fraction: 0.25, candidates: 2500, withinLowest: 107, newWithinLowest: 1, lowestFirstFoundAt: 1 });
      expect(c.verdict).toBe('levelled-off');
      expect(c.stillGrowing).toBe(false);
      expect(c.statement).toBe(
        'Levelled off: 1 of the 107 distinct structures within 5 kJ/mol of the lowest energy was first found in the last 2,500 ' +
          'of 10,000 candidates (the last 25%), 1% of them where a search still finding them at a steady rate would give about 25%. ' +
          "More starts of the same kind would likely add few low-energy structures (this says nothing about space groups, Z' or " +
          'conformers the search did not try).',
      );
    });

    it('calls 27 new of 164 within 5 kJ/mol in the last 72 of 285 candidates still growing', () => {
      const rows = runWithFirstFinds(285, [...spread(136, 2, 212), ...spread(27, 215, 284)], spread(22, 3, 280));
      const c = convergenceCurve(rows, [5, 10, 20]) as ConvergenceCurve;
      expect(c.tail).toMatchObject({ candidates: 72, withinLowest: 164, newWithinLowest: 27 });
      expect(c.verdict).toBe('growing');
      expect(c.statement).toMatch(/^Still growing: 27 of the 164 distinct structures .* last 72 of 285 candidates \(the last 25%\), 16% of them/);
    });

    it('calls a few late finds below the growth thresholds slowing, and the lowest found late growing', () => {
      // 2 of 18 new in the tail: 11%, but fewer than 3.
      const slow = convergenceCurve(runWithFirstFinds(380, [...spread(15, 2, 240), 300, 350], spread(100, 3, 370)), [5, 10, 20]) as ConvergenceCurve;
      expect(slow.tail.newWithinLowest).toBe(2);
      expect(slow.verdict).toBe('slowing');
      expect(slow.statement).toMatch(/^Slowing: 2 of the 18 /);
      // 3 of 60 new: at least 3 but 5%: slowing, not growing (the share rule).
      const share = convergenceCurve(runWithFirstFinds(400, [...spread(56, 2, 290), 310, 330, 390], []), [5]) as ConvergenceCurve;
      expect(share.tail.newWithinLowest).toBe(3);
      expect(share.verdict).toBe('slowing');
      // The lowest-energy structure itself first met in the tail: growing whatever the counts.
      const lowestLate = runWithFirstFinds(400, spread(40, 1, 200), [], 390);
      const c = convergenceCurve(lowestLate, [5]) as ConvergenceCurve;
      expect(c.tail.lowestFirstFoundAt).toBe(390);
      expect(c.verdict).toBe('growing');
      expect(c.statement).toMatch(/^Still growing: the lowest-energy structure itself was first found at candidate 390/);
      expect(convergenceVerdict(0, 40, true)).toBe('growing');
    });

    it('puts the thresholds where the README says', () => {
      expect([MIN_NEW_GROWING, GROWING_SHARE, LEVELLED_SHARE]).toEqual([3, 0.1, 0.05]);
      expect(convergenceVerdict(3, 30, false)).toBe('growing');
      expect(convergenceVerdict(2, 10, false)).toBe('slowing');
      expect(convergenceVerdict(3, 31, false)).toBe('slowing');
      expect(convergenceVerdict(1, 20, false)).toBe('slowing');
      expect(convergenceVerdict(1, 21, false)).toBe('levelled-off');
      expect(convergenceVerdict(0, 5, false)).toBe('levelled-off');
    });
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
