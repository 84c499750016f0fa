// Solve A p = b (mod 1) for a real vector p, with A an integer matrix of 3 columns and b real: the
// equation an origin shift must satisfy, (I - W) p = t_target - t (mod 1) for every operation (W, t).
// Method: diagonalise A with unimodular row and column operations (Smith's normal form without the
// divisibility chain, which the solution does not need; H. J. S. Smith, Phil. Trans. R. Soc. 1861; the
// use for origin shifts follows R. W. Grosse-Kunstleve, "Algorithms for deriving crystallographic
// space-group information", Acta Cryst. A 55, 1999). Row operations act on b too; then D q = U b + n with
// n integer, and p = V q.

/**
 * A solution p (a real 3-vector) of A p = b + n for some integer vector n, or null when none exists:
 * the rows of U b that meet a zero row of D must be whole numbers within `slack`. Free directions of p
 * (polar axes, where any origin is as good) are set to 0.
 */
export function solveModOne(a: number[][], b: number[], slack: number): [number, number, number] | null {
  const n = a.length;
  const m = a.map((row) => row.slice());
  const rhs = b.slice();
  // V accumulates the column operations (3x3, row-major rows of columns).
  const v = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  const diag = [0, 0, 0];
  for (let t = 0; t < 3 && t < n; t++) {
    for (;;) {
      // Smallest non-zero entry of the remaining block moves to (t, t).
      let br = -1, bc = -1;
      for (let r = t; r < n; r++) {
        for (let c = t; c < 3; c++) {
          const x = m[r][c];
          if (x !== 0 && (br < 0 || Math.abs(x) < Math.abs(m[br][bc]))) {
            br = r;
            bc = c;
          }
        }
      }
      if (br < 0) break;
      swapRows(m, rhs, t, br);
      swapCols(m, v, t, bc);
      const p = m[t][t];
      let clean = true;
      // Clear column t below the pivot (row operations carry b along).
      for (let r = t + 1; r < n; r++) {
        const q = Math.floor(m[r][t] / p);
        if (q !== 0) {
          for (let c = 0; c < 3; c++) m[r][c] -= q * m[t][c];
          rhs[r] -= q * rhs[t];
        }
        if (m[r][t] !== 0) clean = false;
      }
      // Clear row t right of the pivot (column operations go into V).
      for (let c = t + 1; c < 3; c++) {
        const q = Math.floor(m[t][c] / p);
        if (q !== 0) {
          for (let r = 0; r < n; r++) m[r][c] -= q * m[r][t];
          for (let r = 0; r < 3; r++) v[3 * r + c] -= q * v[3 * r + t];
        }
        if (m[t][c] !== 0) clean = false;
      }
      if (clean) break;
    }
    diag[t] = m[t][t] ?? 0;
  }
  // Rows without a pivot must read 0 = (U b)_r + integer.
  const q = [0, 0, 0];
  for (let r = 0; r < n; r++) {
    const d = r < 3 ? diag[r] : 0;
    if (d === 0) {
      if (Math.abs(rhs[r] - Math.round(rhs[r])) > slack) return null;
    } else q[r] = rhs[r] / d;
  }
  return [
    v[0] * q[0] + v[1] * q[1] + v[2] * q[2],
    v[3] * q[0] + v[4] * q[1] + v[5] * q[2],
    v[6] * q[0] + v[7] * q[1] + v[8] * q[2],
  ];
}

function swapRows(m: number[][], rhs: number[], i: number, j: number): void {
  if (i === j) return;
  const t = m[i];
  m[i] = m[j];
  m[j] = t;
  const s = rhs[i];
  rhs[i] = rhs[j];
  rhs[j] = s;
}

function swapCols(m: number[][], v: number[], i: number, j: number): void {
  if (i === j) return;
  for (const row of m) {
    const t = row[i];
    row[i] = row[j];
    row[j] = t;
  }
  for (let r = 0; r < 3; r++) {
    const t = v[3 * r + i];
    v[3 * r + i] = v[3 * r + j];
    v[3 * r + j] = t;
  }
}
