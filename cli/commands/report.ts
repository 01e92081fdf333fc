import { basename, extname } from "node:path";
import { UsageError } from "../../src/errors.js";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { renderMarkdownReport } from "../../src/report/renderMarkdownReport.js";
import { renderReportSvgs } from "../../src/report/renderReportSvgs.js";
import { renderMethodsText } from "../../src/report/renderMethodsText.js";
import { renderTestText } from "../../src/report/terminal.js";
import { escapeTerminal } from "../../src/report/escapeTerminal.js";
import type { ReportContext } from "../../src/report/ReportContext.js";
import { EXIT } from "../exitCodes.js";
import { refuseOverwritingInputs } from "../checkPaths.js";
import { type Io, sha256File, toolVersion } from "../io.js";
import { inputName, isStreamInput, streamDigest } from "../readStdin.js";
import { type OutputFile, writeOutputs } from "../writeOutputs.js";
import { audit, textWidth, useColor } from "./test.js";
import { dataInputs } from "../loadSummary.js";

/** The command line as typed, each argument quoted for a POSIX shell when needed. */
export function commandLine(argv: readonly string[]): string {
  return ["arrowaudit", ...argv].map((a) => (/^[\w@%+=:,./-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`)).join(" ");
}

/**
 * The `arrowaudit test` command equivalent to a demo run, with every setting the demo applies
 * spelled out: the bundled files (as paths from the project folder), the demo's missing codes and
 * level order unless the user gave their own, and the user's other options (`--out` dropped).
 * @example demoTestCommand(["demo"], { missing: "-9,999", levels: "education=primary|secondary|tertiary" })
 */
export function demoTestCommand(argv: readonly string[], opts: Record<string, unknown>): string {
  const args: string[] = [];
  let dropped = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === "demo" && !dropped) dropped = true;
    else if (a === "--out") i++;
    else if (!a.startsWith("--out=")) args.push(a);
  }
  const given = (flag: string) => args.some((a) => a === flag || a.startsWith(`${flag}=`));
  if (!given("--missing") && typeof opts.missing === "string") args.push("--missing", opts.missing);
  if (!given("--levels") && typeof opts.levels === "string") args.push("--levels", opts.levels);
  return commandLine(["test", "data/demo/graph.txt", "data/demo/cohort.csv", ...args]);
}

/**
 * An input as a report records it: its path (as `shown`) and the SHA-256 of the file; for an
 * input read as a stream (standard input, a pipe), its name and the SHA-256 of the bytes read
 * from it, since there is no file to hash again.
 */
async function inputRecord(io: Io, path: string, shown: string): Promise<{ path: string; sha256: string }> {
  if (isStreamInput(io, path)) return { path: inputName(path), sha256: streamDigest(io, path) ?? "not computed: the stream was not read to its end" };
  return { path: shown, sha256: await sha256File(path, io.cwd) };
}

/**
 * `arrowaudit report <graph> <data> --out file.html|file.md|file.txt`, and `arrowaudit demo`.
 * A Markdown report is written with its drawing beside it (`report.md` → `report.svg`); a `.txt`
 * file gets the methods paragraphs and their references alone, as plain text.
 */
export async function runReport(io: Io, graphPath: string, dataPath: string | undefined, opts: Record<string, unknown>, argv: string[], demo: boolean, moreData: readonly string[] = []): Promise<number> {
  const out = String(opts.out);
  const ext = extname(out).toLowerCase();
  if (ext !== ".html" && ext !== ".htm" && ext !== ".md" && ext !== ".txt") throw new UsageError(`--out ${out}: the report file must end in .html, .md or .txt (the methods text alone)`);
  const svgName = out.slice(0, out.length - ext.length) + ".svg";
  refuseOverwritingInputs(
    io,
    [{ path: out, role: `--out ${out}` }, ...(ext === ".md" ? [{ path: svgName, role: `the drawing ${svgName} written beside --out ${out}` }] : [])],
    [{ path: graphPath, role: "graph file" }, ...dataInputs(dataPath, opts), ...moreData.map((path) => ({ path, role: "site summary" }))],
  );
  const result = await audit(io, graphPath, dataPath, opts, moreData);
  const context: ReportContext = {
    command: commandLine(argv),
    date: io.now().toISOString(),
    inputs: [
      await inputRecord(io, graphPath, demo ? `data/demo/${basename(graphPath)}` : graphPath),
      ...(await Promise.all(dataInputs(dataPath, opts).map((d) => inputRecord(io, d.path, demo ? `data/demo/${basename(d.path)}` : d.path)))),
      ...(await Promise.all(moreData.map((path) => inputRecord(io, path, path)))),
    ],
    toolVersion: toolVersion(),
    demo,
    ...(demo ? { equivalentCommand: demoTestCommand(argv, opts) } : {}),
  };
  if (demo && dataPath !== undefined) result.data.file = `data/demo/${basename(dataPath)}`;
  if (opts.printSummary && !opts.quiet) {
    io.stdout(renderTestText(result, { ascii: !!opts.ascii, color: useColor(io), width: textWidth(io) }));
    if (context.equivalentCommand) io.stdout(`\nthe same audit as a test command:\n  ${escapeTerminal(context.equivalentCommand)}\n`);
  }
  let files: OutputFile[];
  if (ext === ".txt") {
    files = [{ path: out, content: renderMethodsText(result, context) }];
  } else if (ext === ".md") {
    // The drawing first, the report last: both are written in full before either replaces its file (cli/writeOutputs.ts).
    const svgs = await renderReportSvgs(result, { standalone: true });
    files = [
      { path: svgName, content: svgs.graph },
      { path: out, content: renderMarkdownReport(result, context, { svgFile: basename(svgName) }) },
    ];
  } else {
    const svgs = await renderReportSvgs(result);
    files = [{ path: out, content: renderHtmlReport(result, context, svgs) }];
  }
  const written = writeOutputs(io, files);
  if (demo && !opts.quiet) io.stdout(`\nreport written to ${escapeTerminal(written)}\n${ext === ".txt" ? "plain text, ready to paste" : "open it in a browser; it works offline"}\n`);
  else if (!opts.quiet) io.stderr(`report written to ${escapeTerminal(written)}\n`);
  return opts.failOnContradiction && result.global.contradicted > 0 ? EXIT.contradiction : EXIT.ok;
}
