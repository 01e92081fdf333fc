/**
 * Number and label formatting shared by every renderer (terminal, HTML, Markdown, SVG).
 *
 * Conventions follow common reporting practice for a methods/results section:
 * p-values to three decimals, "< 0.001" below that and "> 0.999" above (never "0");
 * effects to two decimals, three when the effect is smaller than 0.1 in absolute value;
 * confidence intervals in square brackets with the same number of decimals as their effect.
 * Negative zero after rounding is written "0.00", never "-0.00".
 * Non-finite numbers are written "n/a" so that nothing prints as "NaN".
 */
import type { Claim, TestName } from "../audit/types.js";

/** Text written in place of a number that is missing or not finite. */
export const NOT_AVAILABLE = "n/a";

/**
 * Fixed-decimal rendering of a finite number with negative zero removed.
 * Cost: O(1).
 */
function fixed(x: number, digits: number): string {
  const s = x.toFixed(digits);
  // "-0.00" → "0.00": a rounded value of zero carries no sign
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

/**
 * Format a p-value for a report: "< 0.001" below 0.001, "> 0.999" above 0.999,
 * otherwise three decimals ("0.032", "0.410"). A p of exactly 0 (which the pipeline never
 * produces, see `log_p`) is still written "< 0.001". Cost: O(1).
 * Source: common practice in epidemiology journals (three decimals, "< 0.001" floor).
 *
 * @param p a probability in [0, 1]
 * @returns the formatted value without the "p =" prefix; "n/a" when p is not finite
 * @example formatP(0.0000123) // "< 0.001"
 * @example formatP(0.04817)   // "0.048"
 */
export function formatP(p: number): string {
  if (!Number.isFinite(p)) return NOT_AVAILABLE;
  if (p < 0.001) return "< 0.001";
  if (p > 0.999) return "> 0.999";
  return fixed(p, 3);
}

/**
 * Format a p-value with its prefix for running text: "p < 0.001", "p = 0.032", "p > 0.999".
 * Cost: O(1).
 *
 * @example formatPInline(0.032) // "p = 0.032"
 */
export function formatPInline(p: number): string {
  const s = formatP(p);
  if (s.startsWith("<") || s.startsWith(">")) return `p ${s}`;
  return `p = ${s}`;
}

/**
 * Number of decimals used for an effect: 3 when |effect| < 0.1 (so small effects do not all
 * read "0.00"/"0.01"), else 2. Cost: O(1).
 *
 * @example effectDigits(0.083) // 3
 * @example effectDigits(-0.41) // 2
 */
export function effectDigits(effect: number): number {
  return Number.isFinite(effect) && Math.abs(effect) < 0.1 ? 3 : 2;
}

/**
 * Format an effect size (partial correlation or its likelihood-ratio analogue).
 * Cost: O(1).
 *
 * @param effect the effect
 * @param digits decimals; default `effectDigits(effect)`
 * @example formatEffect(0.2149) // "0.21"
 * @example formatEffect(-0.0421) // "-0.042"
 */
export function formatEffect(effect: number, digits: number = effectDigits(effect)): string {
  if (!Number.isFinite(effect)) return NOT_AVAILABLE;
  return fixed(effect, digits);
}

/**
 * Format a confidence interval as "[lower, upper]". Cost: O(1).
 *
 * @param ci the interval [lower, upper]
 * @param digits decimals; default the larger of the two bounds' `effectDigits`
 * @example formatCI([0.12, 0.31]) // "[0.12, 0.31]"
 */
export function formatCI(ci: readonly [number, number], digits?: number): string {
  const d = digits ?? Math.max(effectDigits(ci[0]), effectDigits(ci[1]));
  return `[${formatEffect(ci[0], d)}, ${formatEffect(ci[1], d)}]`;
}

/**
 * Format an effect and its 95% CI with matching decimals: "0.21 [0.12, 0.31]". Cost: O(1).
 *
 * @example formatEffectWithCI(0.083, [0.021, 0.145]) // "0.083 [0.021, 0.145]"
 */
export function formatEffectWithCI(effect: number, ci: readonly [number, number]): string {
  const d = effectDigits(effect);
  return `${formatEffect(effect, d)} ${formatCI(ci, d)}`;
}

/**
 * Format a test statistic (t, G², Fisher's C) to two decimals. Cost: O(1).
 *
 * @example formatStatistic(12.3456) // "12.35"
 */
export function formatStatistic(x: number): string {
  if (!Number.isFinite(x)) return NOT_AVAILABLE;
  return fixed(x, 2);
}

/**
 * Format a count with comma thousands separators, independent of the machine's locale.
 * Cost: O(digits).
 *
 * @example formatCount(1204) // "1,204"
 */
export function formatCount(n: number): string {
  if (!Number.isFinite(n)) return NOT_AVAILABLE;
  const sign = n < 0 ? "-" : "";
  const digits = String(Math.round(Math.abs(n)));
  return sign + digits.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
}

/** Words the ASCII claim notation gives meaning to; a name equal to one (in any letter case) is quoted. */
const ASCII_KEYWORDS = new Set(["indep", "given", "nothing"]);
/** A name the graph file would accept unquoted: letters of any script, marks, digits, "_" and ".". */
const BARE_NAME = /^[\p{L}\p{M}\p{N}_.]+$/u;

/**
 * A name as the ASCII claim notation writes it: as it is when the graph file's grammar would read
 * it as a bare name and it is not one of the notation's words (`indep`, `given`, `nothing`), else
 * in double quotes with `"` and `\` escaped by a backslash, as in the graph file. Cost: O(|name|).
 *
 * @example asciiName("sbp")         // "sbp"
 * @example asciiName("systolic bp") // '"systolic bp"'
 * @example asciiName("given")       // '"given"'
 */
export function asciiName(name: string): string {
  if (BARE_NAME.test(name) && !ASCII_KEYWORDS.has(name.toLowerCase())) return name;
  return `"${name.replace(/["\\]/g, (c) => `\\${c}`)}"`;
}

/**
 * Human-readable label of an implied independence. The Unicode form is the mathematical notation
 * "x ⫫ y | a, b", with the empty conditioning set written "∅" (Dawid 1979, J. R. Statist. Soc. B
 * 41:1–31, for the sign). The ASCII form, for plain-text logs and terminals without Unicode, is
 * arrowaudit's own word notation "x indep y given a, b", read "x is independent of y given a and
 * b", with "given nothing" for the empty set; names that the graph file would have to quote
 * (spaces, commas, symbols) or that equal one of its words are double-quoted ({@link asciiName}),
 * so the label stays unambiguous. Unicode-form names are not quoted or escaped: escape for the
 * target format (HTML, Markdown, terminal) afterwards. Cost: O(|given|).
 *
 * @param claim x, y and the conditioning set
 * @param ascii use the ASCII word notation
 * @example claimLabel({ x: "a", y: "b", given: [] }) // "a ⫫ b | ∅"
 * @example claimLabel({ x: "a", y: "b", given: ["c", "d"] }, true) // "a indep b given c, d"
 * @example claimLabel({ x: "systolic bp", y: "b", given: [] }, true) // '"systolic bp" indep b given nothing'
 */
export function claimLabel(claim: Pick<Claim, "x" | "y" | "given">, ascii = false): string {
  if (ascii) {
    const set = claim.given.length === 0 ? "nothing" : claim.given.map(asciiName).join(", ");
    return `${asciiName(claim.x)} indep ${asciiName(claim.y)} given ${set}`;
  }
  const set = claim.given.length === 0 ? "∅" : claim.given.join(", ");
  return `${claim.x} ⫫ ${claim.y} | ${set}`;
}

/**
 * Symbol for a claim's effect in short labels: "r" for a partial Pearson correlation,
 * "ρ" (ASCII "rho") for a partial Spearman correlation, "e" for the likelihood-ratio effect
 * of the categorical and regression tests (see `lrEffect` in src/stats/effectScale.ts). Cost: O(1).
 *
 * @example effectSymbol("pearson-partial") // "r"
 */
export function effectSymbol(test: TestName, ascii = false): string {
  switch (test) {
    case "pearson-partial":
    case "gcm":
      return "r";
    case "gcm-rank":
      return ascii ? "rho" : "ρ";
    case "stratified-chisq":
    case "linear-by-linear":
    case "regression-lr":
      return "e";
  }
}

/**
 * Symbol for one claim's effect: {@link effectSymbol} of its test, except "e" for a generalised
 * covariance measure on several residual products (a nominal side), whose effect is on the
 * likelihood-ratio scale. Cost: O(1).
 * @example claimEffectSymbol({ test: "gcm", details: { components: 2 } }) // "e"
 */
export function claimEffectSymbol(claim: { test: TestName; details?: Record<string, unknown> }, ascii = false): string {
  if ((claim.test === "gcm" || claim.test === "gcm-rank") && Number(claim.details?.components ?? 1) > 1) return "e";
  return effectSymbol(claim.test, ascii);
}

/**
 * Replace hyphen-minus signs of negative numbers by the typographic minus sign (U+2212), for
 * HTML and SVG output where the text is read rather than copied into code. Cost: O(length).
 *
 * @example typographicMinus("-0.11 [-0.17, -0.05]") // "−0.11 [−0.17, −0.05]"
 */
export function typographicMinus(text: string): string {
  return text.replace(/(^|[\s(\[=,])-(?=\d)/g, "$1\u2212");
}

/**
 * A confidence level as a percentage with the decimals that tell it from 100%: 0.95 → "95%",
 * 0.999 → "99.9%", 0.99853 → "99.85%" (one decimal at least below 99%, as many as the distance
 * to 100% needs above). Cost: O(1).
 * @example formatLevel(1 - 0.05) // "95%"
 */
export function formatLevel(level: number): string {
  const a = 100 * (1 - level);
  const d = a >= 1 ? 1 : Math.max(1, 1 - Math.floor(Math.log10(a)));
  return `${Number((100 * level).toFixed(d))}%`;
}
