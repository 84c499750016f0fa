// Option values shared by commands: whole numbers and durations, each refused with a message naming the option.

/** A whole-number option value >= min. */
export function integer(text: string, name: string, min: number): number {
  const v = Number(text);
  if (!/^\s*\d+\s*$/.test(text) || v < min) throw new Error(`${name} must be a whole number >= ${min}, not '${text}'`);
  return v;
}

/** A number of seconds > 0 (decimals allowed). */
export function seconds(text: string, name: string): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v <= 0) throw new Error(`${name} must be a number of seconds > 0, not '${text}'`);
  return v;
}
