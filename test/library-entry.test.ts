// The library entry point (src/index.ts) carries a CIF all the way to invariants and a distance.
// Rock salt: every ion has 6 nearest neighbours of the other kind at a/2 and 12 of its own kind at a/√2
// (the NaCl structure type, common practice); a = 5.6402 Å (CRC Handbook of Chemistry and Physics, from memory).
import { describe, expect, it } from 'vitest';
import * as polysift from '../src/index.js';

const A = 5.6402;
const rockSalt = (id: string, a: number) => `data_${id}
_cell_length_a ${a}
_cell_length_b ${a}
_cell_length_c ${a}
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
_space_group_name_H-M_alt 'F m -3 m'
_space_group_name_Hall '-F 4 2 3'
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
Na1 Na 0 0 0
Cl1 Cl 0.5 0.5 0.5
`;

describe('the library entry point', () => {
  it('reads a CIF, builds the periodic set and gives the rock-salt shells as AMD', () => {
    const [result] = polysift.readCifText(rockSalt('nacl', A), 'nacl.cif');
    expect(result!.kind).toBe('record');
    if (result!.kind !== 'record') return;
    const { set } = polysift.toPeriodicSet(result.record, { hydrogens: 'keep' });
    expect(set.motif.length / 3).toBe(8);
    const p = polysift.pdd(set, 18);
    const a = polysift.amd(p);
    for (let j = 0; j < 6; j++) expect(a[j]).toBeCloseTo(A / 2, 10);
    for (let j = 6; j < 18; j++) expect(a[j]).toBeCloseTo(A / Math.SQRT2, 10);
    expect(polysift.crystalFacts(result.record).densityGPerCm3).toBeCloseTo(2.163, 3);
  });

  it('measures a 1% larger cell at EMD a/2 x 1% over the first shell', () => {
    const [r1, r2] = polysift.readCifText(rockSalt('a', A) + rockSalt('b', A * 1.01), 'two.cif');
    if (r1!.kind !== 'record' || r2!.kind !== 'record') throw new Error('both blocks should read');
    const p1 = polysift.pdd(polysift.toPeriodicSet(r1.record, { hydrogens: 'keep' }).set, 6);
    const p2 = polysift.pdd(polysift.toPeriodicSet(r2.record, { hydrogens: 'keep' }).set, 6);
    // Both PDDs are one row of six a/2 entries, so the L-infinity EMD is the difference of a/2.
    expect(polysift.emd(p1, p2)).toBeCloseTo((A * 0.01) / 2, 12);
    expect(polysift.amdDistance(polysift.amd(p1), polysift.amd(p2))).toBeCloseTo((A * 0.01) / 2, 12);
  });
});
