/**
 * One CSV row per tested claim (then one per untestable pair), for spreadsheets and scripts.
 * Cells that a spreadsheet would run as a formula (starting with =, +, -, @, tab or carriage
 * return) are neutralised with a leading apostrophe, as OWASP advises against CSV injection
 * (CWE-1236); plain numbers are written as numbers, so negative effects stay numeric.
 *
 * Lists of names (the `given` set and the repair `arrows`) are written as JSON arrays of strings,
 * `["bmi","smoker"]` (`[]` for the empty set), so names containing spaces, commas or semicolons
 * stay unambiguous and every language can read the cell back (RFC 8259); the cell is then quoted
 * as any other (RFC 4180).
 */
import type { AuditResult } from "../audit/types.js";

const FORMULA_START = /^[=+\-@\t\r]/;
const NUMBER = /^-?\d+(\.\d+)?(e[+-]?\d+)?$/i;

/** Quote a CSV cell (RFC 4180) and neutralise formula starts. Cost: O(|cell|). */
export function csvCell(v: unknown): string {
  let s = v === undefined || v === null ? "" : String(v);
  if (FORMULA_START.test(s) && !NUMBER.test(s)) s = "'" + s;
  return /[",\n\r;]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

const COLUMNS = [
  "rank", "x", "y", "given", "n", "test", "statistic", "df", "p", "log_p", "p_adjusted", "p_method", "effect", "ci_low", "ci_high", "verdict", "arrows", "reason",
  // Monte-Carlo p-values: draws, standard error, 99% Clopper–Pearson interval, and a verdict the cap left undecided with the draws proposed
  "p_draws", "p_se", "p_ci99_low", "p_ci99_high", "p_undecided", "p_proposed_B",
  // what the test could detect, and the equivalence test against the margin with its (1 − 2α) interval
  "detectable", "equivalence", "equivalence_ci_low", "equivalence_ci_high",
] as const;

/** A list of names as one JSON array (RFC 8259), e.g. `["bmi","smoker"]`. Cost: O(total length). */
export function nameList(names: readonly string[]): string {
  return JSON.stringify(names);
}

/** The whole result as CSV text with a header row. Cost: O(claims). */
export function renderCsv(r: AuditResult): string {
  const lines = [COLUMNS.join(",")];
  for (const c of r.claims) {
    lines.push(
      [
        c.rank, c.x, c.y, nameList(c.given), c.n, c.test, c.statistic, c.df, c.p, c.log_p, c.p_adjusted, c.p_method, c.effect, c.ci[0], c.ci[1], c.verdict, nameList(c.arrows), "",
        c.monte_carlo?.draws ?? "", c.monte_carlo?.se ?? "", c.monte_carlo?.ci99[0] ?? "", c.monte_carlo?.ci99[1] ?? "", c.p_undecided ? "true" : "", c.p_proposed_B ?? "",
        c.detectable ?? "", c.equivalence ?? "", c.equivalence_interval?.[0] ?? "", c.equivalence_interval?.[1] ?? "",
      ]
        .map(csvCell)
        .join(","),
    );
  }
  for (const u of r.untestable) {
    lines.push(["", u.x, u.y, u.given ? nameList(u.given) : "", "", "", "", "", "", "", "", "", "", "", "", "untestable", "", u.reason, "", "", "", "", "", "", "", "", "", ""].map(csvCell).join(","));
  }
  return lines.join("\r\n") + "\r\n";
}
