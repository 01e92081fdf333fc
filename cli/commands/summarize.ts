/**
 * `arrowaudit summarize <graph> <data> --out site.json`: the statistics the audit of the graph
 * needs from one site's rows, with no row-level value (`summarizeSite`), for pooling with other
 * sites by `arrowaudit test <graph> site-a.json site-b.json …`.
 */
import { basename, extname } from "node:path";
import { UsageError } from "../../src/errors.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { MAX_SETS_PER_PAIR } from "../../src/audit/runAudit.js";
import { DEFAULT_MIN_CELL, summarizeSiteWith, type SiteSummarySettings } from "../../src/audit/siteSummary.js";
import { parallelPatternMoments } from "../parallelPatternMoments.js";
import { siteClaimHelper } from "../claimHelper.js";
import { refuseOverwritingInputs } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import { type Io, sha256File, writeAtomic } from "../io.js";
import { splitList } from "../loadGraph.js";
import { isStdin } from "../readStdin.js";
import { loadAuditInputs } from "./test.js";

/** `arrowaudit summarize`. */
export async function runSummarize(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>): Promise<number> {
  if (isStdin(graphPath)) throw new UsageError("summarize needs the graph as a file, whose SHA-256 goes into the summary; give the graph file's path");
  const out = String(opts.out);
  refuseOverwritingInputs(io, [{ path: out, role: "--out file" }], [{ path: graphPath, role: "graph file" }, { path: dataPath, role: "data file" }]);
  const { graph, table } = await loadAuditInputs(io, graphPath, dataPath, opts);
  const settings: SiteSummarySettings = {
    sets: (opts.sets as SiteSummarySettings["sets"]) ?? "union-parents",
    method: (opts.method as SiteSummarySettings["method"]) ?? "auto",
    listwise: !!opts.listwise,
    min_cell: (opts.minCell as number | undefined) ?? DEFAULT_MIN_CELL,
    unmeasured: splitList(opts.unmeasured).sort(),
  };
  const site = typeof opts.site === "string" ? opts.site : isStdin(dataPath) ? "site" : basename(dataPath, extname(dataPath));
  const measured = graph.nodes.filter((n) => graph.isMeasured(n));
  const { claims } = deriveClaims(graph, { sets: settings.sets, cap: MAX_SETS_PER_PAIR });
  // the flexible claims' pattern moments over two threads, or their row-path fits shared with a helper thread, as `test` does
  const summary = await summarizeSiteWith(table, { graphSha256: await sha256File(graphPath, io.cwd), site, settings, measured, claims }, (t, o) => parallelPatternMoments(t, o), siteClaimHelper);
  writeAtomic(out, io.cwd, JSON.stringify(summary, null, 1) + "\n");
  if (!opts.quiet) {
    const kinds = { moments: 0, tables: 0, residuals: 0, score: 0, untestable: 0 };
    for (const c of summary.claims) kinds[c.kind]++;
    io.stderr(
      `site ${JSON.stringify(site)}: ${summary.n} rows; ${summary.claims.length} claims: ${kinds.residuals} as residual sums of the flexible test, ${kinds.moments} as moments, ${kinds.tables} as tables, ${kinds.score ? `${kinds.score} as regression scores, ` : ""}${kinds.untestable} untestable at this site` +
        `${summary.suppressed.rows > 0 ? `; ${summary.suppressed.rows} rows in ${summary.suppressed.patterns} missing-data patterns of fewer than ${settings.min_cell} rows left out` : ""}; wrote ${out}\n`,
    );
  }
  return EXIT.ok;
}
