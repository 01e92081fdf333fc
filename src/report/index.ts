export { escapeXml } from "./escapeXml.js";
export { escapeTerminal, escapeTerminalMessage, escapeControlCharacters } from "./escapeTerminal.js";
export { adjustedInterval, adjustmentLevel, effectIntervalAt } from "./adjustedInterval.js";
export { renderMethodsText } from "./renderMethodsText.js";
export { renderCsv, csvCell, nameList } from "./csv.js";
export { renderTestText, renderClaimsText, middleEllipsis, uniqueShortNames, DEFAULT_TEXT_WIDTH } from "./terminal.js";
export type { TextOptions, ClaimsListing } from "./terminal.js";
export {
  NOT_AVAILABLE,
  asciiName,
  claimLabel,
  effectDigits,
  claimEffectSymbol,
  effectSymbol,
  formatCI,
  formatCount,
  formatEffect,
  formatEffectWithCI,
  formatP,
  formatPInline,
  formatStatistic,
  typographicMinus,
} from "./format.js";
export type { ReportContext } from "./ReportContext.js";
export { layoutGraph, contradictionMarks, chooseLayout, LAYOUT_THRESHOLDS } from "./layoutGraph.js";
export { placeInLayers, longestPathLayers } from "./placeInLayers.js";
export type { LayoutChoice, LayoutMethod, GraphLayout, GraphMarks, ContradictionMark, NodeBox, ArrowRoute, Connector, ReportGraph } from "./layoutGraph.js";
export { renderGraphSvg } from "./renderGraphSvg.js";
export type { GraphSvgOptions } from "./renderGraphSvg.js";
export { renderForestPlot } from "./renderForestPlot.js";
export type { ForestPlotOptions } from "./renderForestPlot.js";
export { renderHtmlReport } from "./renderHtmlReport.js";
export type { ReportSvgs } from "./renderHtmlReport.js";
export { renderMarkdownReport, escapeMarkdown } from "./renderMarkdownReport.js";
export type { MarkdownReportOptions } from "./renderMarkdownReport.js";
export { buildReportText, globalSentence } from "./buildReportText.js";
export type { ReportText } from "./buildReportText.js";
export { renderReportSvgs } from "./renderReportSvgs.js";
