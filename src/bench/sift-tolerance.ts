// Figures behind the default duplicate tolerance: on generated landscapes, the EMD between copies of one minimum
// (optimiser-like noise of sigma Å per coordinate, 2e-4 relative on cell lengths) against the EMD between
// distinct packings, including close partners (the molecule turned by a few degrees, same density within
// 0.005 g/cm3, energy within 0.1 kJ/mol). Exact EMD between PDDs at k = 100, hydrogens kept.
import { generateLandscape } from '../demo/landscape.js';
import { readCifText } from '../io/read.js';
import { toPeriodicSet } from '../geometry/periodic-set.js';
import { pdd } from '../invariants/pdd.js';
import { emd } from '../metric/emd.js';
import { DEFAULT_TOLERANCE_ANGSTROM } from '../landscape/sift.js';
import type { Pdd } from '../types.js';

export async function run(): Promise<void> {
  process.stdout.write(`default duplicate tolerance: ${DEFAULT_TOLERANCE_ANGSTROM} Å\n`);
  process.stdout.write('noise sigma (Å)  turn (deg)  copies: median / max EMD (Å)  close partners: min EMD (Å)  other distinct: min EMD (Å)\n');
  for (const [noise, turn] of [
    [0.001, 1],
    [0.002, 2],
    [0.003, 2],
    [0.005, 4],
  ] as const) {
    const g = generateLandscape({ seed: 7, packings: 8, copiesPerPacking: 6, closePairs: 3, noiseAngstrom: noise, closeTurnDeg: turn, squeezeMoves: 200 });
    const pdds: Pdd[] = readCifText(g.cif, 'generated.cif').map((b) => {
      if (b.kind !== 'record') throw new Error(`generated block rejected: ${b.rejected.reason}`);
      return pdd(toPeriodicSet(b.record, { hydrogens: 'keep' }).set, 100);
    });
    const partner = new Map<number, number>();
    for (const [a, b] of g.closePairs) {
      partner.set(a, b);
      partner.set(b, a);
    }
    const same: number[] = [];
    let close = Infinity;
    let other = Infinity;
    for (let i = 0; i < pdds.length; i++)
      for (let j = i + 1; j < pdds.length; j++) {
        const ti = g.truth[i];
        const tj = g.truth[j];
        // Copies: every pair; distinct: one copy of each packing against all copies of the other is enough.
        if (ti === tj) same.push(emd(pdds[i], pdds[j]));
        else if (partner.get(ti) === tj) close = Math.min(close, emd(pdds[i], pdds[j]));
        else if (j % 6 === 0) other = Math.min(other, emd(pdds[i], pdds[j]));
      }
    same.sort((a, b) => a - b);
    process.stdout.write(
      `${noise.toFixed(3).padStart(15)}  ${String(turn).padStart(10)}  ${same[same.length >> 1].toFixed(4)} / ${same[same.length - 1].toFixed(4)}` +
        `${' '.repeat(20)}${close.toFixed(4)}${' '.repeat(24)}${other.toFixed(4)}\n`,
    );
  }
}
