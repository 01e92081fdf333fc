/**
 * The number grammar of cohort files, shared by the text path and the byte scanner.
 *
 * A *number cell* is, after trimming: an optional sign, digits with at most one decimal mark
 * (at least one digit in all), and an optional exponent `e`/`E` with optional sign and at
 * least one digit. The decimal mark is `.`, or `,` when the file uses decimal commas (then
 * `.` is not accepted). Not numbers: `Inf`, `NaN`, hexadecimal, thousands separators, `1e`,
 * a lone sign or mark, and numbers beyond the double range (`1e400`), which are read as text.
 * The value is the correctly rounded double (ECMAScript `Number`).
 */

const DOT_GRAMMAR = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const COMMA_GRAMMAR = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Parse trimmed cell text as a number by the grammar in the module comment; `undefined` when
 * it is not a number. Cost: O(length).
 * @throws never
 * @example parseNumberText("1,5e-3", true) // 0.0015
 */
export function parseNumberText(text: string, decimalComma: boolean): number | undefined {
  if (decimalComma) {
    if (!COMMA_GRAMMAR.test(text)) return undefined;
    const v = Number(text.replace(",", "."));
    return Number.isFinite(v) ? v : undefined;
  }
  if (!DOT_GRAMMAR.test(text)) return undefined;
  const v = Number(text);
  return Number.isFinite(v) ? v : undefined;
}
