// The expansion-tolerant comparison of `locate`: compare two crystals after removing a uniform scale. Every PDD is
// divided by the cube root of its crystal's volume per atom (cell volume / atoms compared), so both sides are
// brought to one volume per atom, and the EMD between the scaled PDDs is multiplied by the reference's cube root
// again, giving a distance in Å at the reference's size. A crystal stretched uniformly by s (every distance times s)
// has the same scaled PDD as the original, so thermal expansion moves the distance only through what does not scale
// (molecules keep their shape while the cell grows). The scale factor reported is cbrt(v_reference / v_kept): 1.01
// for a reference whose cell is 1% longer along every axis. Dividing every PDD by its own factor keeps the EMD a
// metric on the scaled PDDs and the AMD lower bound valid, so the exact neighbour search applies unchanged.
import type { Pdd } from '../types.js';

/** Volume per atom in Å³ (atoms as compared, after the hydrogen policy); null when either is unknown or not positive. */
export function volumePerAtom(volumeA3: number | null, atoms: number | null): number | null {
  if (volumeA3 === null || atoms === null || !(volumeA3 > 0) || !(atoms > 0)) return null;
  return volumeA3 / atoms;
}

/** Length scale of a crystal: cbrt(volume per atom), Å. */
export function lengthScale(volumePerAtomA3: number): number {
  return Math.cbrt(volumePerAtomA3);
}

/** The PDD with every distance divided by `lengthAngstrom` (dimensionless; weights unchanged). */
export function scaledPdd(p: Pdd, lengthAngstrom: number): Pdd {
  const rows = new Float64Array(p.rows.length);
  for (let i = 0; i < rows.length; i++) rows[i] = p.rows[i] / lengthAngstrom;
  return { k: p.k, rows, weights: p.weights };
}

/** How much larger the reference is than the kept structure, per length: cbrt(v_reference / v_kept). */
export function scaleFactor(referenceVolumePerAtomA3: number, keptVolumePerAtomA3: number): number {
  return Math.cbrt(referenceVolumePerAtomA3 / keptVolumePerAtomA3);
}
