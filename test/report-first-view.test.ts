// The report's first view, computed before the page draws (issue 14): round colour classes for the EMD lines,
// the rank and distance cut that decide which lines show at first, the zoom on the lowest 10 kJ/mol, what
// energy/density windows would merge, and how far the metric map can be trusted. Browser behaviour is in
// report-demo.test.ts and report-browser.test.ts.
import { describe, expect, it } from 'vitest';
import { numpy } from './helpers/numpy.js';
import fc from 'fast-check';
import {
  buildEdgeClasses, decimalsOf, defaultLineMax, edgeClassOf, edgeRanks, EDGE_CLASSES, landscapeView, roundClasses,
} from '../src/report/sift-data.js';
import { compareWithWindows, describeWindowPair } from '../src/report/window-compare.js';
import { mapQuality } from '../src/report/map-quality.js';
import { syntheticLandscape } from './helpers/synthetic-landscape.js';
import { landscapeOf, randomPdd, rng, type SyntheticStructure } from './diff-fixtures.js';
import type { Landscape } from '../src/landscape/schema.js';

const STEPS = [1, 2, 2.5, 5];

describe('round colour classes for the EMD lines', () => {
  it('turns the odd bounds of the issue (0.0437 to 0.358 Å) into 0 to 0.40 in steps of 0.05, labelled with two decimals', () => {
    const c = buildEdgeClasses(0.0437, 0.358);
    expect(c.boundsAngstrom).toEqual([0, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4]);
    expect(c.tickText).toEqual(['0.00', '0.05', '0.10', '0.15', '0.20', '0.25', '0.30', '0.35', '0.40']);
    expect(c.colours.length).toBe(8);
    expect(buildEdgeClasses(0.166, 0.6).boundsAngstrom).toEqual([0.1, 0.2, 0.3, 0.4, 0.5, 0.6]);
    expect(decimalsOf(0.25)).toBe(2);
    expect(decimalsOf(2)).toBe(0);
  });

  it('always covers the range with at most EDGE_CLASSES classes of the smallest round step that can (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-4, max: 50, noNaN: true }), fc.double({ min: 1e-3, max: 50, noNaN: true }), (lo, width) => {
        const hi = lo + width;
        const { lo: first, step, classes } = roundClasses(lo, hi, EDGE_CLASSES);
        const exp = Math.floor(Math.log10(step) + 1e-9);
        const mantissa = Number((step / 10 ** exp).toPrecision(6));
        expect(STEPS).toContain(mantissa);
        expect(classes).toBeLessThanOrEqual(EDGE_CLASSES);
        expect(first).toBeLessThanOrEqual(lo * (1 + 1e-9));
        expect(first + classes * step).toBeGreaterThanOrEqual(hi * (1 - 1e-9));
        expect(Math.abs(first / step - Math.round(first / step))).toBeLessThan(1e-6);
        // the next smaller round step would need more classes
        const k = STEPS.indexOf(mantissa);
        const smaller = k > 0 ? STEPS[k - 1]! * 10 ** exp : 5 * 10 ** (exp - 1);
        expect(Math.ceil(hi / smaller - 1e-9) - Math.floor(lo / smaller + 1e-9)).toBeGreaterThan(EDGE_CLASSES);
      }),
      { numRuns: 300 },
    );
  });

  it('bins lines into those classes as numpy.digitize does', () => {
    const land = syntheticLandscape({ kept: 300, seed: 3 });
    const d = land.edges.map((e) => e[2]);
    const c = buildEdgeClasses(Math.min(...d), Math.max(...d));
    const ref = numpy('print(json.dumps(np.digitize(np.array(d["d"]), np.array(d["b"])).tolist()))', { d, b: c.boundsAngstrom.slice(1, -1) });
    expect(d.map((x) => edgeClassOf(x, c.boundsAngstrom))).toEqual(ref);
  });
});

describe('which lines show at first', () => {
  const land = syntheticLandscape({ kept: 300, seed: 7 });
  const rank = edgeRanks(land.edges);

  it('ranks each line by the better of its two ends (brute force over each structure\'s sorted lines)', () => {
    const brute = land.edges.map(([a, b, d]) => {
      const rankAt = (node: number, other: number) => {
        const mine = land.edges
          .filter((e) => e[0] === node || e[1] === node)
          .map((e) => [e[0] === node ? e[1] : e[0], e[2]] as const)
          .sort((x, y) => x[1] - y[1] || x[0] - y[0]);
        return mine.findIndex((x) => x[0] === other && x[1] === d) + 1;
      };
      return Math.min(rankAt(a, b), rankAt(b, a));
    });
    expect(rank).toEqual(brute);
    // every kept structure with a line has exactly one line of its own at rank 1 or a better one from its partner
    expect(Math.min(...rank)).toBe(1);
  });

  it('cuts lines at the lower quartile of the nearest-neighbour links (numpy.percentile), rounded up to 3 digits', () => {
    const nearest = land.edges.filter((_e, q) => rank[q] === 1).map((e) => e[2]);
    const q25 = numpy('print(json.dumps(float(np.percentile(np.array(d), 25))))', nearest) as number;
    const cut = defaultLineMax(land.edges, rank)!;
    expect(cut).toBeGreaterThanOrEqual(q25);
    expect(cut - q25).toBeLessThan(10 ** (Math.floor(Math.log10(q25)) - 2));
    expect(Number(cut.toPrecision(3))).toBe(cut);
    expect(defaultLineMax(land.edges.slice(0, 5), rank.slice(0, 5))).toBeNull();
  });
});

describe('the first view of the landscape', () => {
  it('zooms on the lowest 10 kJ/mol when structures reach well beyond, counting those inside', () => {
    const base = syntheticLandscape({ kept: 300, seed: 9 });
    // spread its energies over 0-30 kJ/mol, as a real search's are
    const land: Landscape = { ...base, structures: base.structures.map((s) => ({ ...s, energyRel: s.energyRel === null ? null : 3 * s.energyRel })) };
    const highest = Math.max(...land.kept.map((k) => land.structures[k]!.energyRel!));
    expect(highest).toBeGreaterThan(12);
    const v = landscapeView(land);
    expect(v.lowWindow).toBe(10);
    const z = v.zoom!;
    expect(z.energyRange[0]).toBeLessThan(0);
    expect(z.energyRange[1]).toBeCloseTo(10.4, 6);
    const low = land.kept.filter((k) => land.structures[k]!.energyRel! <= 10);
    // every structure within the window lies inside the view
    for (const k of low) {
      const d = land.structures[k]!.densityGPerCm3!;
      expect(d).toBeGreaterThanOrEqual(z.densityRange[0]);
      expect(d).toBeLessThanOrEqual(z.densityRange[1]);
    }
    const inside = land.kept.filter((k) => {
      const s = land.structures[k]!;
      return s.energyRel! >= z.energyRange[0] && s.energyRel! <= z.energyRange[1] && s.densityGPerCm3! >= z.densityRange[0] && s.densityGPerCm3! <= z.densityRange[1];
    });
    expect(v.inView).toBe(inside.length);
    expect(v.inView).toBeLessThan(land.kept.length);
  });

  it('does not zoom a landscape that fits the window, nor one without energies; converts the window to other units', () => {
    const land = syntheticLandscape({ kept: 60, seed: 9 });
    const compact: Landscape = { ...land, structures: land.structures.map((s) => ({ ...s, energyRel: s.energyRel === null ? null : s.energyRel / 10 })) };
    expect(landscapeView(compact).zoom).toBeNull();
    expect(landscapeView({ ...land, lowestEnergy: null }).zoom).toBeNull();
    // 10 kJ/mol = 2.390 kcal/mol (thermochemical calorie, 4.184 J: NIST SP 811, 2008)
    expect(landscapeView({ ...land, parameters: { ...land.parameters, energyUnit: 'kcal/mol' } }).lowWindow).toBe(2.39);
  });
});

describe('what energy/density windows would merge', () => {
  /** Three distinct kept structures: A and B within both windows of each other (0.3 kJ/mol, 0.01 g/cm3), C far off. */
  function threeStructures(eB: number, unit: 'kJ/mol' | 'kcal/mol' = 'kJ/mol'): Landscape {
    const r = rng(4);
    const s: SyntheticStructure[] = [
      { id: 'A', pdd: randomPdd(r, 10, 2, 1), energy: -100, densityGPerCm3: 1.4 },
      { id: 'B', pdd: randomPdd(r, 10, 2, 1), energy: -100 + eB, densityGPerCm3: 1.41 },
      { id: 'C', pdd: randomPdd(r, 10, 2, 1), energy: -95, densityGPerCm3: 1.3 },
    ];
    const l = landscapeOf(s, 10, { toleranceAngstrom: 0.04, energyUnit: unit });
    l.edges = [[0, 1, 0.2], [0, 2, 0.5], [1, 2, 0.45]];
    l.structures[0]!.members = 3;
    l.structures[1]!.members = 2;
    l.structures[0]!.spaceGroup = 'P21/c';
    l.structures[1]!.spaceGroup = 'P21/c';
    return l;
  }

  it('merges two distinct structures inside both windows and names them with their EMD', () => {
    const l = threeStructures(0.3);
    const c = compareWithWindows(l)!;
    expect(c).toEqual({ energyWindow: 0.5, densityWindowGPerCm3: 0.02, compared: 3, groups: 2, lost: 1, mergedEdges: 1, example: { a: 0, b: 1, emdAngstrom: 0.2, toleranceMultiple: 5 } });
    expect(describeWindowPair(c, l)).toBe(
      'energy/density windows (0.5 kJ/mol, 0.02 g/cm3) would leave 2 groups of the 3 distinct structures; they would merge A and B ' +
        '(both P21/c; 0.00 and 0.30 kJ/mol; 1.400 and 1.410 g/cm3; found 3 times and 2 times), which are 0.200 Å apart, 5.0 times the duplicate tolerance.',
    );
    // 0.6 kJ/mol apart: outside the energy window, nothing merged
    const apart = compareWithWindows(threeStructures(0.6))!;
    expect(apart.groups).toBe(3);
    expect(apart.example).toBeNull();
  });

  it('uses the 0.5 kJ/mol window in the landscape\'s own unit (0.1195 kcal/mol)', () => {
    expect(compareWithWindows(threeStructures(0.1, 'kcal/mol'))!.lost).toBe(1);
    expect(compareWithWindows(threeStructures(0.2, 'kcal/mol'))!.lost).toBe(0);
  });
});

describe('how far the metric map can be trusted', () => {
  const emb = (stress: number) => ({ method: 'm', quality: [{ name: 'Kruskal stress-1', value: stress }, { name: 'trustworthiness@10', value: 0.9 }], coords: [[0, 0] as [number, number]] });
  it('grades stress-1 on Kruskal\'s scale (Psychometrika 1964) and folds a poor map', () => {
    expect(mapQuality(emb(0.02))).toEqual({ stress: 0.02, trustworthiness: 0.9, grade: 'excellent', folded: false });
    expect(mapQuality(emb(0.05))!.grade).toBe('good');
    expect(mapQuality(emb(0.15))!.grade).toBe('fair');
    expect(mapQuality(emb(0.2))).toMatchObject({ grade: 'poor', folded: true });
    expect(mapQuality(emb(0.33))!.folded).toBe(true);
    expect(mapQuality(null)).toBeNull();
  });
});
