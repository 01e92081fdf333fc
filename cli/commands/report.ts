import { basename, extname } from "node:path";
import { UsageError } from "../../src/errors.js";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { renderMarkdownReport } from "../../src/report/renderMarkdownReport.js";
import { renderReportSvgs } from "../../src/report/renderReportSvgs.js";
import { renderTestText } from "../../src/report/terminal.js";
import type { ReportContext } from "../../src/report/ReportContext.js";
import { EXIT } from "../exitCodes.js";
import { type Io, sha256File, toolVersion, writeAtomic } from "../io.js";
import { audit, useColor } from "./test.js";

/** The command line as typed, each argument quoted for a POSIX shell when needed. */
export function commandLine(argv: readonly string[]): string {
  return ["arrowaudit", ...argv].map((a) => (/^[\w@%+=:,./-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`)).join(" ");
}

/**
 * `arrowaudit report <graph> <data> --out file.html|file.md`, and `arrowaudit demo`.
 * A Markdown report is written with its drawing beside it (`report.md` → `report.svg`).
 */
export async function runReport(io: Io, graphPath: string, dataPath: string, opts: Record<string, unknown>, argv: string[], demo: boolean): Promise<number> {
  const out = String(opts.out);
  const ext = extname(out).toLowerCase();
  if (ext !== ".html" && ext !== ".htm" && ext !== ".md") throw new UsageError(`--out ${out}: the report file must end in .html or .md`);
  const result = await audit(io, graphPath, dataPath, opts);
  const context: ReportContext = {
    command: commandLine(argv),
    date: io.now().toISOString(),
    inputs: [
      { path: demo ? `data/demo/${basename(graphPath)}` : graphPath, sha256: await sha256File(graphPath, io.cwd) },
      { path: demo ? `data/demo/${basename(dataPath)}` : dataPath, sha256: await sha256File(dataPath, io.cwd) },
    ],
    toolVersion: toolVersion(),
    demo,
  };
  if (demo) result.data.file = `data/demo/${basename(dataPath)}`;
  if (opts.printSummary && !opts.quiet) io.stdout(renderTestText(result, { ascii: !!opts.ascii, color: useColor(io) }));
  let written: string;
  if (ext === ".md") {
    const svgName = out.slice(0, out.length - ext.length) + ".svg";
    const svgs = await renderReportSvgs(result, { standalone: true });
    writeAtomic(svgName, io.cwd, svgs.graph);
    written = writeAtomic(out, io.cwd, renderMarkdownReport(result, context, { svgFile: basename(svgName) }));
  } else {
    const svgs = await renderReportSvgs(result);
    written = writeAtomic(out, io.cwd, renderHtmlReport(result, context, svgs));
  }
  if (demo && !opts.quiet) io.stdout(`\nreport written to ${written}\nopen it in a browser; it works offline\n`);
  else if (!opts.quiet) io.stderr(`report written to ${written}\n`);
  return opts.failOnContradiction && result.global.contradicted > 0 ? EXIT.contradiction : EXIT.ok;
}
