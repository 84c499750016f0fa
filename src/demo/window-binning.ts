// The usual shortcut that sift replaces, kept for comparison in tests and the demo: structures are visited in
// order of increasing energy and each joins the first kept structure within an energy window AND a density
// window of it, else it is kept. Windows of 0.5 kJ/mol and 0.02 g/cm3 are common practice (from memory).

export const BIN_ENERGY_KJ_PER_MOL = 0.5;
export const BIN_DENSITY_G_PER_CM3 = 0.02;

/** Group label per structure (the index of the kept structure it joined). */
export function binByWindows(
  energyKjPerMol: ArrayLike<number>,
  densityGPerCm3: ArrayLike<number>,
  energyWindow = BIN_ENERGY_KJ_PER_MOL,
  densityWindow = BIN_DENSITY_G_PER_CM3,
): Int32Array {
  const n = energyKjPerMol.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => energyKjPerMol[a] - energyKjPerMol[b] || a - b);
  const label = new Int32Array(n).fill(-1);
  const kept: number[] = [];
  for (const s of order) {
    let joined = -1;
    for (const k of kept) {
      if (Math.abs(energyKjPerMol[s] - energyKjPerMol[k]) <= energyWindow && Math.abs(densityGPerCm3[s] - densityGPerCm3[k]) <= densityWindow) {
        joined = k;
        break;
      }
    }
    if (joined < 0) {
      kept.push(s);
      label[s] = s;
    } else label[s] = joined;
  }
  return label;
}
