// Stage "energy basis": energies given per cell (periodic DFT outputs usually are) become energies per molecule,
// divided by the number of molecules in each structure's cell as written, found from its bonds (facts.z,
// src/geometry/facts.ts), so a P1 supercell written by a search (twice the cell, twice the energy) divides by twice
// as many. (The row's `z` is the crystal's Z in its detected space group, not this number.) A structure whose count
// is unknown, or whose cell holds more than one kind of molecule (no single Z to divide by), gets no energy and says
// why; no energy is ever divided by a guess. Each converted row says which Z was used (a note), and the run's
// messages count them. With energies per molecule (the default) this stage does nothing.
import type { SiftState } from './state.js';

export async function energyBasisStage(s: SiftState): Promise<void> {
  if (s.params.energyBasis !== 'cell') return;
  const byZ = new Map<number, number>();
  let unusable = 0;
  for (const w of s.work) {
    const row = w.row;
    if (row.energy === null) continue;
    // Molecules in the cell as written (not the crystal's Z, which may be of a smaller conventional cell).
    const inCell = w.facts?.z ?? null;
    const problem =
      inCell === null || !(inCell > 0)
        ? 'no energy: the energy is per cell and the molecules per cell are unknown, so it cannot be divided'
        : row.formulas.length > 1
          ? `no energy: the energy is per cell and the cell holds more than one kind of molecule (${row.formulas.join(', ')}), so there is no single Z to divide by; give energies per formula unit with --energy-basis molecule`
          : null;
    if (problem !== null) {
      row.energy = null;
      row.notes.push(problem);
      // A rejected structure keeps its rejection as the reason.
      if (row.status !== 'rejected') row.reason = problem;
      unusable++;
      continue;
    }
    const z = inCell as number;
    row.energy /= z;
    row.notes.push(`energy per cell divided by ${z}, the molecules in the cell as written (found from the bonds)`);
    byZ.set(z, (byZ.get(z) ?? 0) + 1);
  }
  const counts = [...byZ].sort((a, b) => a[0] - b[0]).map(([z, n]) => `${z} for ${n}`).join(', ');
  s.messages.push(`energies are per cell: divided by the molecules in each cell as written (from its bonds): ${counts || 'none converted'}`);
  if (unusable > 0) s.messages.push(`${unusable} structure(s) have a per-cell energy but no single molecule count to divide it by, so no energy (reason per row in structures.csv)`);
}
