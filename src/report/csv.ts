/**
 * One CSV row per tested claim (then one per untestable pair), for spreadsheets and scripts.
 * Cells that a spreadsheet would run as a formula (starting with =, +, -, @, tab or carriage
 * return) are neutralised with a leading apostrophe, as OWASP advises against CSV injection
 * (CWE-1236); plain numbers are written as numbers, so negative effects stay numeric.
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

const COLUMNS = ["rank", "x", "y", "given", "n", "test", "statistic", "df", "p", "log_p", "p_adjusted", "p_method", "effect", "ci_low", "ci_high", "verdict", "arrows", "reason"] as const;

/** The whole result as CSV text with a header row. Cost: O(claims). */
export function renderCsv(r: AuditResult): string {
  const lines = [COLUMNS.join(",")];
  for (const c of r.claims) {
    lines.push(
      [c.rank, c.x, c.y, c.given.join(" "), c.n, c.test, c.statistic, c.df, c.p, c.log_p, c.p_adjusted, c.p_method, c.effect, c.ci[0], c.ci[1], c.verdict, c.arrows.join(" ; "), ""]
        .map(csvCell)
        .join(","),
    );
  }
  for (const u of r.untestable) {
    lines.push(["", u.x, u.y, (u.given ?? []).join(" "), "", "", "", "", "", "", "", "", "", "", "", "untestable", "", u.reason].map(csvCell).join(","));
  }
  return lines.join("\r\n") + "\r\n";
}
