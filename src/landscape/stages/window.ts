// Stage "window": energies relative to the lowest usable structure, and the energy window above it. Structures
// above the window are listed as outside-window and not compared; those without an energy stay in with a note.
import type { SiftState } from './state.js';

export async function windowStage(s: SiftState): Promise<void> {
  const usable = s.work.filter((w) => w.row.status !== 'rejected');
  let lowest: number | null = null;
  for (const w of usable) if (w.row.energy !== null && (lowest === null || w.row.energy < lowest)) lowest = w.row.energy;
  const window = s.params.energyWindow;
  for (const w of usable) {
    if (w.row.energy === null || lowest === null) continue;
    w.row.energyRel = w.row.energy - lowest;
    if (window !== null && w.row.energyRel > window) w.row.status = 'outside-window';
  }
  if (window !== null)
    for (const w of usable)
      if (w.row.energy === null) w.row.notes.push('no energy, so the energy window could not be applied; compared with the rest');
  s.lowest = lowest;
  s.active = usable.filter((w) => w.row.status !== 'outside-window');
}
