// Output rounding, applied once when the landscape is built so that runs on the same inputs are byte-identical.

/** x rounded to d decimals, with -0 written as 0. */
export function roundTo(x: number, d: number): number {
  const r = Number(x.toFixed(d));
  return r === 0 ? 0 : r;
}

export function round6(x: number): number {
  return roundTo(x, 6);
}
