/**
 * The methods paragraphs of a report alone, as plain text ready to paste into a manuscript: the
 * paragraphs of `buildReportText` (numbers filled in, only the methods used) followed by the
 * references they cite, numbered. No markup of any kind; Unicode as in the report (⫫, ∅, α, −).
 */
import type { AuditResult } from "../audit/types.js";
import { buildReportText } from "./buildReportText.js";
import type { ReportContext } from "./ReportContext.js";

/**
 * Render the methods text: paragraphs separated by blank lines, then "References" and the cited
 * works, one per line, numbered in alphabetical order. Line breaks inside a paragraph are never
 * added (a word processor wraps). Cost: O(k + r) for k claims and r references.
 *
 * @param result the audit result
 * @param context tool version and the rest of the run's context
 * @returns plain text ending in a newline
 * @example renderMethodsText(result, context).startsWith("Analyses were run with arrowaudit")
 */
export function renderMethodsText(result: AuditResult, context: ReportContext): string {
  const t = buildReportText(result, context);
  const refs = t.references.map((r, i) => `${i + 1}. ${r}`);
  return [...t.methods.map((p) => p.replace(/\s*\r?\n\s*/g, " ")), "References", refs.join("\n")].join("\n\n") + "\n";
}
