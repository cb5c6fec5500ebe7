/**
 * The numeric-flag check shared by the solve and refine commands: a value must follow the flag,
 * be finite, an integer where asked, and at least `min`; otherwise a message naming the flag and
 * the value is collected (all messages are printed together, exit status 2).
 */
export function numberFlagParser(errors: string[]) {
  return (flag: string, v: string | undefined, integer: boolean, min: number): number | undefined => {
    if (v === undefined || v.startsWith("--")) {
      errors.push(`${flag}: a value is required`);
      return undefined;
    }
    const x = Number(v);
    if (!Number.isFinite(x) || (integer && !Number.isInteger(x)) || x < min) {
      errors.push(`${flag}: expected ${integer ? "an integer" : "a number"} ≥ ${min}, got "${v}"`);
      return undefined;
    }
    return x;
  };
}
