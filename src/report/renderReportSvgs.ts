/**
 * Both drawings of a report in one asynchronous call (the graph layout is asynchronous).
 */
import type { AuditResult } from "../audit/types.js";
import { layoutGraph } from "./layoutGraph.js";
import type { ReportSvgs } from "./renderHtmlReport.js";
import { renderForestPlot } from "./renderForestPlot.js";
import { renderGraphSvg } from "./renderGraphSvg.js";

/**
 * Lay out and draw the graph (with contradictions) and the forest plot of a result, ready for
 * `renderHtmlReport`; with `standalone: true` the graph SVG is a well-formed file of its own.
 * Cost: that of `layoutGraph` plus O(k log k) for the forest plot.
 *
 * @param result the audit result
 * @param options `standalone`: add the SVG namespace (for saving the drawing as a .svg file)
 * @throws UnknownNodeError when the result's graph is inconsistent (see `layoutGraph`)
 * @example const svgs = await renderReportSvgs(result); renderHtmlReport(result, context, svgs)
 */
export async function renderReportSvgs(result: AuditResult, options: { standalone?: boolean } = {}): Promise<Required<ReportSvgs>> {
  const layout = await layoutGraph(result);
  return {
    graph: renderGraphSvg(layout, { title: "Causal graph with the missing arrows the data contradict", standalone: options.standalone }),
    forest: renderForestPlot(result.claims, { minEffect: result.settings.min_effect, alpha: result.settings.alpha, adjust: result.settings.adjust, standalone: options.standalone }),
  };
}
