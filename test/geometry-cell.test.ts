import { describe, expect, it } from 'vitest';
import { basisVolume, cellToBasis, cellVolume, planeSpacings } from '../src/geometry/cell.js';
import type { CellParams } from '../src/types.js';
import { gemmiJson } from './geometry-gemmi.js';

const cells: CellParams[] = [
  { a: 5.6402, b: 5.6402, c: 5.6402, alpha: 90, beta: 90, gamma: 90 },
  { a: 7.1, b: 9.3, c: 11.7, alpha: 90, beta: 104.3, gamma: 90 },
  { a: 5.2, b: 7.9, c: 8.4, alpha: 81.2, beta: 77.5, gamma: 69.8 },
  { a: 12.1, b: 12.1, c: 6.3, alpha: 90, beta: 90, gamma: 120 },
  { a: 4.0, b: 4.0, c: 4.0, alpha: 100, beta: 100, gamma: 100 },
];

describe('cellToBasis and cellVolume (checked against gemmi, live)', () => {
  // Reference: gemmi.UnitCell(...).orth.mat (columns are a, b, c; a along x, b in the xy plane) and .volume.
  const ref = gemmiJson<{ m: number[][]; v: number }[]>(
    `cells = ${JSON.stringify(cells.map((c) => [c.a, c.b, c.c, c.alpha, c.beta, c.gamma]))}\n` +
      'out = []\nfor c in cells:\n    u = gemmi.UnitCell(*c)\n    out.append({"m": u.orth.mat.tolist(), "v": u.volume})\nprint(json.dumps(out))',
  );
  cells.forEach((cell, n) => {
    it(`matches gemmi for ${JSON.stringify(cell)}`, () => {
      const b = cellToBasis(cell);
      for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) expect(b[3 * r + c]).toBeCloseTo(ref[n]!.m[c]![r]!, 9);
      expect(cellVolume(cell)).toBeCloseTo(ref[n]!.v, 6);
      expect(basisVolume(b)).toBeCloseTo(ref[n]!.v, 6);
      // lattice vector lengths and angles come back
      const len = (r: number) => Math.hypot(b[3 * r]!, b[3 * r + 1]!, b[3 * r + 2]!);
      expect(len(0)).toBeCloseTo(cell.a, 10);
      expect(len(1)).toBeCloseTo(cell.b, 10);
      expect(len(2)).toBeCloseTo(cell.c, 10);
    });
  });
  it('gives the plane spacings of an orthogonal cell as its edges', () => {
    const s = planeSpacings(cellToBasis({ a: 3, b: 4, c: 5, alpha: 90, beta: 90, gamma: 90 }));
    expect(s[0]).toBeCloseTo(3, 12);
    expect(s[1]).toBeCloseTo(4, 12);
    expect(s[2]).toBeCloseTo(5, 12);
  });
  it('refuses cells that are not cells, with the reason', () => {
    const ok = { a: 5, b: 5, c: 5, alpha: 90, beta: 90, gamma: 90 };
    expect(() => cellToBasis({ ...ok, a: 0 })).toThrow(/cell length a = 0/);
    expect(() => cellToBasis({ ...ok, b: -3 })).toThrow(/cell length b/);
    expect(() => cellToBasis({ ...ok, c: Number.NaN })).toThrow(/cell length c/);
    expect(() => cellToBasis({ ...ok, gamma: 180 })).toThrow(/gamma/);
    expect(() => cellVolume({ ...ok, alpha: 120, beta: 120, gamma: 120 })).toThrow(/zero or negative volume/);
    expect(() => cellVolume({ ...ok, alpha: 30, beta: 30, gamma: 100 })).toThrow(/zero or negative volume/);
  });
});
