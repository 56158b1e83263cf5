/**
 * Names a study provides inside expressions besides the parameters, and their substitution.
 *
 * Per shell: `r0` (the structure's distance, Å), `n0` (its degeneracy), `mu` (the reduced mass of
 * the absorber-scatterer pair, amu, from standard atomic weights); per data set: `temperature`
 * (K, when the data set gives one). They are replaced by their numeric values before the
 * expression reaches the parameter set, so every shell's rule becomes an ordinary expression of
 * parameters. Replacement works on tokens of the expression language of src/fit/expressions.ts
 * (numbers, names, operators), so `r0` inside `1e0` or `r0x` is never touched, and each value is
 * written in full precision (JavaScript's shortest round-trip form) inside parentheses.
 */

/** Names that cannot be parameters because a study gives them a meaning. */
export const STUDY_SYMBOLS: ReadonlySet<string> = new Set(['r0', 'n0', 'mu', 'temperature', 'each', 'auto']);

const TOKEN = /(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[A-Za-z_][A-Za-z0-9_]*|\s+|./gsy;

/**
 * Replace names in an expression. `replacement(name)` gives the new text or undefined to keep it.
 * Numbers (including exponents, hexadecimal-looking text is left as is) are never altered.
 */
export function replaceNames(text: string, replacement: (name: string) => string | undefined): string {
  let out = '';
  TOKEN.lastIndex = 0;
  let m: RegExpExecArray | null;
  while ((m = TOKEN.exec(text)) !== null) {
    const token = m[0];
    if (/^[A-Za-z_]/.test(token)) out += replacement(token) ?? token;
    else out += token;
  }
  return out;
}

/** Substitute numeric values for names (each written as `(value)` in round-trip precision). */
export function substituteValues(text: string, values: ReadonlyMap<string, number>): string {
  return replaceNames(text, (name) => {
    const v = values.get(name);
    return v === undefined ? undefined : `(${String(v)})`;
  });
}
