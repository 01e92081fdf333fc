/**
 * The self-contained HTML report: one file with inline CSS and inline SVG, no script, no
 * external font, image, stylesheet or link, readable offline and printable.
 *
 * Sections: summary, graph drawing with legend, forest plot, ranked claim table, untestable
 * claims, warnings, data summary, methods (ready to paste) with references, cautions, and
 * reproducibility. Every data-derived string is XML-escaped; the SVG strings passed in are
 * trusted output of `renderGraphSvg` / `renderForestPlot`, which escape their own text.
 */
import type { AuditResult } from "../audit/types.js";
import { buildReportText } from "./buildReportText.js";
import { escapeXml } from "./escapeXml.js";
import { independenceHtml } from "./independenceMark.js";
import { formatLevel, typographicMinus } from "./format.js";
import type { ReportContext } from "./ReportContext.js";
import { renderForestPlot } from "./renderForestPlot.js";
import { FONT_STACK, INK, MONO_STACK, PALETTE } from "./theme.js";

export interface ReportSvgs {
  /** The graph drawing from `renderGraphSvg` (inline form, without `standalone`). */
  graph?: string;
  /** The forest plot from `renderForestPlot`; rendered here when absent. */
  forest?: string;
}

const CSS = `
*{box-sizing:border-box}
html{-webkit-text-size-adjust:100%}
body{margin:0;background:#fff;color:${INK.text};font-family:${FONT_STACK};font-size:15px;line-height:1.55}
.wrap{max-width:1180px;margin:0 auto;padding:0 28px 48px}
header.masthead{background:${INK.panel};border-bottom:3px solid ${PALETTE.blue};margin-bottom:8px}
header.masthead .wrap{padding-top:22px;padding-bottom:18px}
.brand{font-size:12px;letter-spacing:.14em;text-transform:uppercase;color:${PALETTE.blue};font-weight:700}
h1{font-size:26px;line-height:1.2;margin:4px 0 6px;font-weight:700}
.meta{color:${INK.muted};font-size:13.5px;margin:0}
h2{font-size:19px;margin:34px 0 10px;padding-bottom:6px;border-bottom:1px solid ${INK.rule}}
h3{font-size:15px;margin:20px 0 6px}
p{margin:8px 0}
a{color:${PALETTE.blue}}
nav.toc{font-size:13px;color:${INK.muted};margin:14px 0 0;display:flex;flex-wrap:wrap;gap:4px 16px}
nav.toc a{text-decoration:none;color:${INK.muted}}
nav.toc a:hover{color:${PALETTE.blue};text-decoration:underline}
.demo{margin:18px 0 0;padding:12px 16px;border:2px solid ${PALETTE.orange};background:#fff8e6;border-radius:6px;font-weight:600}
.cards{display:grid;grid-template-columns:repeat(auto-fit,minmax(150px,1fr));gap:12px;margin:12px 0}
.card{border:1px solid ${INK.rule};border-radius:8px;padding:10px 14px;background:#fff}
.card .k{font-size:12px;color:${INK.muted};text-transform:uppercase;letter-spacing:.06em}
.card .v{font-size:26px;font-weight:700;line-height:1.3;font-variant-numeric:tabular-nums}
.card.contradicted{border-color:${PALETTE.vermillion};border-left-width:5px}
.card.contradicted .v{color:#a14300}
.card.consistent{border-left:5px solid ${PALETTE.blue}}
.card.untestable{border-left:5px dashed ${INK.unmeasuredStroke}}
.global{border-left:4px solid ${INK.arrow};background:${INK.panel};padding:10px 16px;border-radius:0 6px 6px 0;margin:12px 0}
.global .stat{font-variant-numeric:tabular-nums;font-weight:600}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:4px 18px;margin:8px 0}
dl.facts dt{color:${INK.muted}}
dl.facts dd{margin:0;overflow-wrap:anywhere}
figure{margin:12px 0 4px}
.figure-scroll{overflow-x:auto;border:1px solid ${INK.rule};border-radius:8px;padding:12px;background:#fff}
.figure-scroll svg{display:block;max-width:100%;height:auto;margin:0 auto}
figcaption{font-size:13px;color:${INK.muted};margin-top:6px}
.table-scroll{overflow-x:auto}
table{border-collapse:collapse;width:100%;font-size:13.5px;font-variant-numeric:tabular-nums}
th,td{padding:6px 8px;text-align:left;vertical-align:top;border-bottom:1px solid ${INK.rule}}
th{font-size:12px;text-transform:uppercase;letter-spacing:.05em;color:${INK.muted};border-bottom:2px solid ${INK.faint};white-space:nowrap}
td.num,th.num{text-align:right;white-space:nowrap}
td.claim{font-weight:500;min-width:12em}
.ind{white-space:nowrap;margin-right:.05em}
.ind span{margin-left:-.5em}
.arrows code{display:block;margin:1px 0;width:max-content}
td.nowrap{white-space:nowrap}
tbody tr:nth-child(even){background:#fafbfc}
tr.contradicted td{background:#fff5ee}
tr.contradicted td:first-child{box-shadow:inset 4px 0 0 ${PALETTE.vermillion}}
.verdict{white-space:nowrap;font-weight:600}
.verdict.contradicted{color:#a14300}
.verdict.consistent{color:#005a8c;font-weight:500}
.mc{font-size:.85em;color:#555}
.undecided{font-size:.85em;font-style:italic}
code,.mono{font-family:${MONO_STACK};font-size:12.5px;background:${INK.panel};padding:1px 4px;border-radius:3px;overflow-wrap:anywhere}
.note{font-size:13px;color:${INK.muted}}
ul.plain{padding-left:20px}
ul.plain li{margin:4px 0}
ol.refs{font-size:13.5px;padding-left:22px}
ol.refs li{margin:4px 0}
.methods{max-width:72em}
.methods p{text-align:left}
footer{margin-top:40px;padding-top:10px;border-top:1px solid ${INK.rule};font-size:12.5px;color:${INK.muted}}
@media (max-width:700px){.wrap{padding:0 14px 32px}h1{font-size:22px}}
@media print{
  @page{margin:16mm 14mm}
  body{font-size:10pt;color:#000}
  .wrap{max-width:none;padding:0}
  header.masthead{background:none;border-bottom:2px solid #000}
  nav.toc{display:none}
  h2{break-after:avoid;page-break-after:avoid}
  figure,.card,.global,tr{break-inside:avoid;page-break-inside:avoid}
  .figure-scroll,.table-scroll{overflow:visible;border:none;padding:0}
  table{font-size:8.5pt}
  tbody tr:nth-child(even){background:none}
  tr.contradicted td{background:none}
  a{color:inherit;text-decoration:none}
}
`;

/** Escape for HTML text and attributes, with typographic minus signs in numbers. */
function h(text: string): string {
  return escapeXml(typographicMinus(text));
}

/** Escape names verbatim (no minus rewriting: names are shown as typed). */
function hn(text: string): string {
  return escapeXml(text);
}

/**
 * Render the self-contained HTML report. No script, no external resource of any kind, an inline
 * print stylesheet; all data-derived text escaped. Cost: O(k + u + v + |svgs|).
 *
 * @param result the audit result
 * @param context command line, date, input hashes, tool version, demo flag
 * @param svgs pre-rendered graph drawing (layout is asynchronous) and optional forest plot
 * @returns a complete HTML document
 * @example renderHtmlReport(result, context, { graph: renderGraphSvg(await layoutGraph(result)) })
 */
export function renderHtmlReport(result: AuditResult, context: ReportContext, svgs: ReportSvgs = {}): string {
  const t = buildReportText(result, context);
  const forest = svgs.forest ?? renderForestPlot(result.claims, { minEffect: result.settings.min_effect, alpha: result.settings.alpha, adjust: result.settings.adjust });
  const contradicted = result.claims.filter((c) => c.verdict === "contradicted").length;
  const consistent = result.claims.length - contradicted;
  const dataName = result.data.file ?? context.inputs[0]?.path ?? "data";

  const sections: { id: string; title: string; body: string }[] = [];

  // summary
  const card = (cls: string, k: string, v: number) => `<div class="card ${cls}"><div class="k">${hn(k)}</div><div class="v">${v}</div></div>`;
  const facts = t.summary.filter((f) => f.label === "Data read");
  const g = t.summary.find((f) => f.label === "Global test");
  sections.push({
    id: "summary",
    title: "Summary",
    body:
      `<dl class="facts">${facts.map((f) => `<dt>${hn(f.label)}</dt><dd>${hn(f.value)}</dd>`).join("")}</dl>` +
      `<div class="cards">${card("tested", "Claims tested", result.claims.length)}${card("contradicted", "Contradicted", contradicted)}${card("consistent", "Consistent", consistent)}${card("untestable", "Untestable", result.untestable.length)}</div>` +
      `<div class="global"><div><strong>Global test.</strong> <span class="stat">${h(g?.value ?? "")}</span></div><p>${h(t.globalSentence)}</p></div>`,
  });

  // graph
  sections.push({
    id: "graph",
    title: "The graph and what the data contradict",
    body: svgs.graph
      ? `<figure><div class="figure-scroll">${svgs.graph}</div><figcaption>The causal graph as drawn by the user. Vermillion long-dashed curves join pairs the graph says are independent (given the sets in the table below) but the data say are not; each is labelled with its effect. Purple short-dashed double-headed curves are unmeasured common causes declared in the graph.</figcaption></figure>`
      : `<p class="note">The graph drawing was not supplied to the report.</p>`,
  });

  // forest plot
  sections.push({
    id: "forest",
    title: "Effects and confidence intervals",
    body: `<figure><div class="figure-scroll">${forest}</div><figcaption>One row per tested claim, in rank order: the effect (point) with its unadjusted ${h(formatLevel(1 - result.settings.alpha))} confidence interval (thick line) and the interval at the level the multiple-testing adjustment used for that claim (thin line). Zero means independence; the small ticks mark ± the effect each claim's test could detect (power ${h(String(result.settings.power ?? 0.8))}). ${h(t.intervalNote)}${result.settings.min_effect > 0 ? h(` The shaded band is ±${result.settings.min_effect}, the smallest effect counted as a contradiction.`) : ""}${t.effectNote ? ` ${h(t.effectNote)}.` : ""}</figcaption></figure>`,
  });

  // ranked table
  const rows = t.claimRows
    .map(
      (r) =>
        `<tr class="claim-row ${r.verdict}"><td class="num">${hn(r.rank)}</td><td class="claim">${independenceHtml(r.claim)}</td><td class="num">${hn(r.n)}</td><td class="nowrap">${hn(r.test)}</td><td class="num">${h(r.effect)}${r.oddsRatio ? `<br><span class="odds-ratio">${h(r.oddsRatio)}</span>` : ""}</td><td class="num">${h(r.detectable)}</td><td class="num adjusted">${h(r.adjustedInterval)}</td><td class="num">${h(r.p)}${r.pPrecision ? `<br><span class="mc">${h(r.pPrecision)}</span>` : ""}</td><td class="num">${h(r.pAdjusted)}</td>` +
        `<td><span class="verdict ${r.verdict}">${r.verdict === "contradicted" ? "◆ contradicted" : "○ consistent"}</span>${r.undecided ? `<br><span class="undecided">${h(r.undecided)}</span>` : ""}<br><span class="group">${h(r.group)}</span></td>` +
        `<td class="arrows">${r.arrows ? r.arrows.split("; ").map((a) => `<code>${hn(a)}</code>`).join(" ") : ""}</td></tr>`,
    )
    .join("");
  sections.push({
    id: "claims",
    title: "Ranked claims",
    body:
      t.claimRows.length === 0
        ? `<p>No claim could be tested.</p>`
        : `<div class="table-scroll"><table class="claims"><thead><tr><th class="num">#</th><th>Claim</th><th class="num">n</th><th>Test</th><th class="num">Effect [${h(formatLevel(1 - result.settings.alpha))} CI]</th><th class="num">Detectable</th><th class="num">Adjusted interval</th><th class="num">p</th><th class="num">Adjusted p</th><th>Verdict</th><th>Arrows to consider</th></tr></thead><tbody>${rows}</tbody></table></div>` +
          `<p class="note">Read “${independenceHtml("x ⫫ y | a, b")}” as “x is independent of y given a and b”; ∅ is the empty set. n is the number of rows used for each claim. ${h(t.effectNote)}. ${h(t.intervalNote)} Arrows to consider are repairs that keep the graph acyclic (“x &lt;-&gt; y”: an unmeasured common cause); adding one needs subject-matter justification.</p>`,
  });

  // untestable
  sections.push({
    id: "untestable",
    title: "Untestable claims",
    body:
      t.untestable.length === 0
        ? `<p>Every implied independence could be tested.</p>`
        : `<p>These missing arrows were <strong>not tested</strong>; they are not shown to hold.</p><ul class="plain untestable">${t.untestable.map((u) => `<li><strong>${independenceHtml(u.claim)}</strong>: ${hn(u.reason)}</li>`).join("")}</ul>`,
  });

  if (t.warnings.length > 0) {
    sections.push({ id: "warnings", title: "Warnings", body: `<ul class="plain warnings">${t.warnings.map((w) => `<li>${independenceHtml(w)}</li>`).join("")}</ul>` });
  }

  // data summary
  sections.push({
    id: "data",
    title: "Data summary",
    body:
      `<p>${hn(dataName)}: ${hn(t.summary[0]!.value.replace(/^.*: /, ""))}. The number of rows used by each claim is in the table of ranked claims.</p>` +
      `<div class="table-scroll"><table class="variables"><thead><tr><th>Variable</th><th>Type</th><th>How the type was decided</th><th class="num">Missing</th><th>Levels and coding</th></tr></thead><tbody>` +
      t.variables.map((v) => `<tr><td class="claim">${hn(v.name)}</td><td>${hn(v.type)}</td><td>${hn(v.decided)}</td><td class="num">${hn(v.missing)}</td><td>${hn(v.levels)}</td></tr>`).join("") +
      `</tbody></table></div><p class="note">${hn(t.codingNote)}</p>`,
  });

  // methods
  sections.push({
    id: "methods",
    title: "Methods",
    body:
      `<div class="methods">${t.methods.map((p) => `<p>${independenceHtml(typographicMinus(p))}</p>`).join("")}</div>` +
      `<h3>References</h3><ol class="refs">${t.references.map((r) => `<li>${hn(r)}</li>`).join("")}</ol>`,
  });

  sections.push({ id: "cautions", title: "Cautions", body: `<ul class="plain cautions">${t.cautions.map((c) => `<li>${hn(c)}</li>`).join("")}</ul>` });

  sections.push({
    id: "reproducibility",
    title: "Reproducibility",
    body: `<dl class="facts">${t.reproducibility.map((f) => `<dt>${hn(f.label)}</dt><dd>${f.code ? `<code>${hn(f.value)}</code>` : hn(f.value)}</dd>`).join("")}</dl>`,
  });

  const nav = sections.map((s) => `<a href="#${s.id}">${hn(s.title)}</a>`).join("");
  const body = sections.map((s) => `<section id="${s.id}"><h2>${hn(s.title)}</h2>${s.body}</section>`).join("\n");
  return (
    `<!doctype html>\n<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">` +
    `<meta name="generator" content="arrowaudit ${hn(context.toolVersion)}"><title>${hn(`${t.title}: ${dataName}`)}</title><style>${CSS}</style></head>\n<body>` +
    `<header class="masthead"><div class="wrap"><div class="brand">arrowaudit</div><h1>${hn(t.title)}</h1>` +
    `<p class="meta">${hn(dataName)} · ${hn(context.date)} · arrowaudit ${hn(context.toolVersion)}</p>` +
    (t.demoNotice ? `<p class="demo" role="note">${hn(t.demoNotice)}</p>` : "") +
    `<nav class="toc" aria-label="Sections">${nav}</nav></div></header>\n<main class="wrap">${body}</main>\n` +
    `<footer class="wrap">Generated by arrowaudit ${hn(context.toolVersion)} on ${hn(context.date)}. This file is self-contained: it loads nothing from any network.</footer></body></html>\n`
  );
}
