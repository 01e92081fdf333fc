/**
 * The Markdown report: the content of the HTML report in GitHub-flavoured Markdown, without the
 * drawings (or with a reference to the graph drawing saved as an SVG file beside it).
 *
 * Every user-supplied string (variable names, levels, file names, messages) is escaped with
 * `escapeMarkdown`, so that a name such as `a|b`, `*x*` or `<script>` is shown as typed and can
 * neither break a table nor inject HTML.
 */
import type { AuditResult } from "../audit/types.js";
import { buildReportText } from "./buildReportText.js";
import { formatLevel } from "./format.js";
import type { ReportContext } from "./ReportContext.js";

export interface MarkdownReportOptions {
  /** Path of the graph drawing saved as SVG, relative to the Markdown file; referenced as an image. */
  svgFile?: string;
}

/**
 * Escape text for Markdown inline content and GFM table cells, with Markdown's own backslash
 * escapes so that the source stays readable as plain text: the ASCII punctuation that Markdown
 * gives meaning to (\ ` * _ [ ] | ~ # $ !) is always escaped; `<` only where it could open raw
 * HTML or an autolink (before a letter, `/`, `!` or `?`), so "p < 0.001" stays as it is; `&` only
 * where it could start a character reference (before a letter, digit or `#`), so "Cox & Snell"
 * stays as it is; `>` never (it is special only at the start of a line, where the report always
 * puts its own text). Line breaks become spaces.
 * No HTML entity is written: escaped text never shows "&lt;" or "&amp;". Cost: O(length).
 * Source: CommonMark 0.31 §2.4 (backslash escapes: any ASCII punctuation), §2.5 (entity
 * references), §6.5 (autolinks), §6.6 (raw HTML); GFM spec §4.10 ("\|" in
 * table cells).
 *
 * @example escapeMarkdown("a|b_c")      // "a\\|b\\_c"
 * @example escapeMarkdown("p < 0.001")  // "p < 0.001"
 * @example escapeMarkdown("<b>R&D")     // "\\<b>R\\&D"
 */
export function escapeMarkdown(text: string): string {
  return text
    .replace(/[\\`*_[\]|~#$!]/g, (c) => `\\${c}`)
    .replace(/<(?=[A-Za-z/!?])/g, "\\<")
    .replace(/&(?=[A-Za-z0-9#])/g, "\\&")
    .replace(/\r\n|\r|\n/g, " ");
}

/** A code span that survives any backticks inside the text (CommonMark §6.1). */
function codeSpan(text: string): string {
  const flat = text.replace(/\r\n|\r|\n/g, " ");
  const longest = Math.max(0, ...[...flat.matchAll(/`+/g)].map((m) => m[0].length));
  const fence = "`".repeat(longest + 1);
  const pad = flat.startsWith("`") || flat.endsWith("`") ? " " : "";
  return `${fence}${pad}${flat}${pad}${fence}`;
}

/** Percent-encode a relative file path for a Markdown link destination. */
function linkPath(path: string): string {
  return encodeURI(path.replace(/\\/g, "/")).replace(/\(/g, "%28").replace(/\)/g, "%29");
}

/**
 * Render the report as GitHub-flavoured Markdown: summary, ranked claim table, untestable list,
 * warnings, data summary, methods with references, cautions and reproducibility; the graph
 * drawing as an image reference when `svgFile` is given. All names escaped.
 * Cost: O(k + u + v).
 *
 * @param result the audit result
 * @param context command line, date, input hashes, tool version, demo flag
 * @param options `svgFile`: relative path of the saved graph drawing
 * @returns Markdown text ending in a newline
 * @example renderMarkdownReport(result, context, { svgFile: "graph.svg" }).includes("![")
 */
export function renderMarkdownReport(result: AuditResult, context: ReportContext, options: MarkdownReportOptions = {}): string {
  const t = buildReportText(result, context);
  const e = escapeMarkdown;
  const out: string[] = [];
  out.push(`# ${e(t.title)}`, "");
  if (t.demoNotice) out.push(`> **${e(t.demoNotice)}**`, "");

  out.push("## Summary", "");
  for (const f of t.summary) out.push(`- **${e(f.label)}:** ${e(f.value)}`);
  out.push("", e(t.globalSentence), "");

  out.push("## Graph", "");
  if (options.svgFile !== undefined) {
    out.push(`![Causal graph with the contradicted missing arrows overlaid](${linkPath(options.svgFile)})`, "");
  } else {
    out.push("The graph drawing is not included in the Markdown report; see the HTML report or save it with the drawing option.", "");
  }
  const contradicted = [...result.claims].filter((c) => c.verdict === "contradicted").sort((a, b) => a.rank - b.rank);
  if (contradicted.length > 0) {
    out.push("Missing arrows contradicted by the data:", "");
    for (const r of t.claimRows.filter((c) => c.verdict === "contradicted")) out.push(`- #${r.rank} ${e(r.claim)}: ${e(r.effect)}`);
    out.push("");
  }

  out.push("## Ranked claims", "");
  if (t.claimRows.length === 0) {
    out.push("No claim could be tested.", "");
  } else {
    out.push(`| # | Claim | n | Test | Effect [${formatLevel(1 - result.settings.alpha)} CI] | Detectable | Adjusted interval | p | Adjusted p | Verdict | Equivalence | Arrows to consider |`);
    out.push("|--:|:--|--:|:--|--:|--:|--:|--:|--:|:--|:--|:--|");
    for (const r of t.claimRows) {
      const verdict = (r.verdict === "contradicted" ? "**contradicted**" : "consistent") + (r.undecided ? ` (${e(r.undecided)})` : "");
      const arrows = r.arrows ? r.arrows.split("; ").map((a) => e(a)).join("; ") : "";
      const effect = r.oddsRatio ? `${r.effect}; ${r.oddsRatio}` : r.effect;
      out.push(`| ${r.rank} | ${e(r.claim)} | ${e(r.n)} | ${e(r.test)} | ${e(effect)} | ${e(r.detectable)} | ${e(r.adjustedInterval)} | ${e(r.p)}${r.pPrecision ? ` (${e(r.pPrecision)})` : ""} | ${e(r.pAdjusted)} | ${verdict} | ${e(r.group)} | ${arrows} |`);
    }
    out.push("", `Read "x ⫫ y \\| a, b" as "x is independent of y given a and b"; ∅ is the empty set. ${e(t.effectNote)}. ${e(t.intervalNote)}`, "");
  }

  out.push("## Untestable claims", "");
  if (t.untestable.length === 0) out.push("Every implied independence could be tested.", "");
  else {
    out.push("These missing arrows were **not tested**; they are not shown to hold.", "");
    for (const u of t.untestable) out.push(`- **${e(u.claim)}**: ${e(u.reason)}`);
    out.push("");
  }

  if (t.warnings.length > 0) {
    out.push("## Warnings", "");
    for (const w of t.warnings) out.push(`- ${e(w)}`);
    out.push("");
  }

  out.push("## Data summary", "");
  out.push("| Variable | Type | How the type was decided | Missing | Levels and coding |", "|:--|:--|:--|--:|:--|");
  for (const v of t.variables) out.push(`| ${e(v.name)} | ${e(v.type)} | ${e(v.decided)} | ${e(v.missing)} | ${e(v.levels)} |`);
  out.push("", `${e(t.codingNote)} The number of rows used by each claim is the n column of the ranked claims.`, "");

  out.push("## Methods", "");
  for (const p of t.methods) out.push(e(p), "");
  out.push("### References", "");
  t.references.forEach((r, i) => out.push(`${i + 1}. ${e(r)}`));
  out.push("");

  out.push("## Cautions", "");
  for (const c of t.cautions) out.push(`- ${e(c)}`);
  out.push("");

  out.push("## Reproducibility", "");
  for (const f of t.reproducibility) out.push(`- **${e(f.label)}:** ${f.code ? codeSpan(f.value) : e(f.value)}`);
  out.push("");
  return out.join("\n");
}
