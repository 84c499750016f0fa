// Invented PDDs given directly as rows (not computed from a crystal), shared by the diff/locate benchmark and the
// diff/locate test fixtures (not a benchmark itself: the leading underscore keeps the runner from treating it as one).
// A PDD here is `rows` (n rows of k ascending distances, row-major) and `weights` (n, summing to 1).

export interface SyntheticPdd {
  rows: number[];
  weights: number[];
}

/** The same PDD with every entry moved by at most `noise` Å (rows re-sorted ascending). */
export function noisyCopy(r: () => number, p: SyntheticPdd, k: number, noise: number): SyntheticPdd {
  const rows = p.rows.map((x) => x + (2 * r() - 1) * noise);
  for (let i = 0; i < rows.length; i += k) {
    const row = rows.slice(i, i + k).sort((a, b) => a - b);
    for (let j = 0; j < k; j++) rows[i + j] = row[j];
  }
  return { rows, weights: p.weights.slice() };
}

/** AMD_j = sum_i w_i PDD_ij ("Average minimum distances of periodic point sets", MATCH Commun. Math. Comput. Chem. 2022). */
export function amdOf(p: SyntheticPdd, k: number): number[] {
  const out = new Array<number>(k).fill(0);
  p.weights.forEach((w, i) => {
    for (let j = 0; j < k; j++) out[j] += w * p.rows[i * k + j];
  });
  return out;
}
