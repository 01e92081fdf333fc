/**
 * The arrowaudit command line: parses flags, calls one library function per command,
 * renders, writes, and maps the outcome to an exit code (cli/exitCodes.ts) in one place.
 */
import { escapeTerminal } from "../src/report/escapeTerminal.js";
import { Command, CommanderError, InvalidArgumentError, Option } from "commander";
import { join } from "node:path";
import { UsageError } from "../src/errors.js";
import { exitFor, EXIT } from "./exitCodes.js";
import { type Io, packageRoot, toolVersion } from "./io.js";
import { readOptionsFrom } from "./readOptionsFrom.js";

/** Parse a number option in [lo, hi]. */
export function numberIn(name: string, lo: number, hi: number, integer = false) {
  return (v: string): number => {
    const x = Number(v);
    if (!Number.isFinite(x) || x < lo || x > hi || (integer && !Number.isInteger(x))) {
      throw new InvalidArgumentError(`${name} must be ${integer ? "a whole number" : "a number"} from ${lo} to ${hi}, got "${v}"`);
    }
    return x;
  };
}

/** The options of summary-statistics input, for `test` and `report`. */
const summaryOptions = (c: Command): Command =>
  c
    .option("--correlations <matrix.csv>", "audit a correlation matrix instead of a data file (square or lower-triangular, names as header and first column); needs --n")
    .option("--covariance <matrix.csv>", "audit a covariance matrix instead of a data file (as --correlations); needs --n")
    .option("--n <cases>", "with --correlations or --covariance: the number of complete cases the matrix was computed on", (v: string) => numberIn("--n", 1, 1e15, true)(v))
    .option("--sd <sds.csv>", "with --correlations: standard deviations (name,sd per line, or names above values) that turn it into covariances")
    .option("--counts <column>", "the data give one row per cell: this column holds each row's number of units (every test weights the rows by it)");

const graphOptions = (c: Command): Command =>
  c
    .addOption(new Option("--format <format>", "graph file format (default: by extension; .dot/.gv are DOT)").choices(["auto", "arrows", "dot"]).default("auto"))
    .option("--unmeasured <names>", "comma-separated nodes that are not in the data (adds to the file's unmeasured:)")
    .addOption(new Option("--sets <kind>", "separating sets for the claims").choices(["union-parents", "minimal", "all-minimal"]).default("union-parents"));

/** Options shared by test, report and demo. */
export const auditOptions = (c: Command): Command =>
  graphOptions(c)
    .option("--alpha <a>", "significance level", numberIn("--alpha", 1e-12, 0.5), 0.05)
    .addOption(new Option("--adjust <method>", "multiple-testing adjustment").choices(["holm", "bh", "none"]).default("holm"))
    .addOption(new Option("--method <method>", "test per claim: auto picks by variable types").choices(["auto", "linear", "rank", "chisq", "regression"]).default("auto"))
    .option("--min-effect <e>", "relevance floor: |effect| below it is never contradicted", numberIn("--min-effect", 0, 1), 0)
    .option("--power <p>", "power at which each claim's detectable effect is given", numberIn("--power", 0.05, 0.999), 0.8)
    .option("--margin <m>", "equivalence margin on the effect scale: an omission is supported when the effect's (1 − 2·alpha) interval (90% at 0.05) lies inside ±m", numberIn("--margin", 1e-6, 1), 0.1)
    .addOption(new Option("--rank-by <key>", "rank contradicted claims by adjusted p or by |effect|").choices(["p", "effect"]).default("p"))
    .option("--missing <codes>", 'extra missing-value codes, comma-separated: a bare code for every column, name=code for one column (e.g. "-9,999,fage=0"); quote a name or code that holds , or = ("...")')
    .option("--ignore <names>", "comma-separated columns to leave out (never a measured node of the graph)")
    .option("--types <list>", 'declare variable types, e.g. "education=ordinal,region=nominal"')
    .option("--levels <list>", 'order levels, e.g. "education=low|mid|high,region=north|south"')
    .addOption(new Option("--delimiter <d>", "field delimiter (default: detected)").choices([",", ";", "tab", "\\t"]))
    .option("--decimal-comma", "numbers use a decimal comma (1,5)", false)
    .addOption(new Option("--engine <engine>", "data engine: memory (delimited text), duckdb (also Parquet and DuckDB database files), or auto (DuckDB for Parquet and database files)").choices(["auto", "memory", "duckdb"]).default("auto"))
    .option("--table <name>", "table of a DuckDB database file to read (needed when it holds several)")
    .option("--listwise", "use only rows complete on every measured variable", false)
    .option("--seed <n>", "seed for Monte-Carlo p-values", numberIn("--seed", 0, 2 ** 32 - 1, true), 1)
    .option("--permutations <B>", "Monte-Carlo permutation p-values for categorical claims, with at most B permutations each (default: drawn as the verdicts need)", numberIn("--permutations", 99, 1e7, true))
    .option("--resampling-risk <e>", "largest chance that Monte-Carlo draws change a verdict (default 0.001)", numberIn("--resampling-risk", 1e-9, 0.25))
    .option("--ascii", "ASCII output only: claims as x indep y given a, b", false)
    .option("--quiet", "print nothing but errors and requested output", false)
    // Reading options that contradict themselves are usage errors before any file is read.
    .hook("preAction", (_cmd, action) => void readOptionsFrom(action.opts(), ""));

/** Build the program; actions record their exit code in `state`. */
function buildProgram(io: Io, state: { code: number }, argv: string[]): Command {
  const program = new Command("arrowaudit")
    .description("Test the independencies a causal DAG implies against cohort data, rank the missing arrows the data contradict, and report.")
    .version(toolVersion(), "-V, --version")
    .showHelpAfterError("(run with --help for usage)")
    .exitOverride()
    .configureOutput({ writeOut: io.stdout, writeErr: (s) => io.stderr(escapeTerminal(s, true)) }); // commander echoes typed arguments

  graphOptions(
    program
      .command("claims")
      .description("list every testable independence claim the graph makes (one per missing arrow)")
      .argument("<graph>", "graph file (.txt in arrowaudit's format, or .dot/.gv)")
      .option("--json", "print one JSON document", false)
      .option("--ascii", "ASCII output only: claims as x indep y given a, b", false)
      .option("--columns <data.csv>", "check graph names against this CSV's header (or a Parquet file's or DuckDB table's columns)")
      .option("--table <name>", "with --columns on a DuckDB database file: the table")
      .option("--max-sets <n>", "with --sets all-minimal: most separating sets listed per pair", numberIn("--max-sets", 1, 100000, true), 100),
  ).action(async (graph: string, opts: Record<string, unknown>) => {
    state.code = await (await import("./commands/claims.js")).runClaims(io, graph, opts);
  });

  summaryOptions(auditOptions(
    program
      .command("test")
      .description("test every claim against a data file and rank the missing arrows the data contradict")
      .argument("<graph>", "graph file")
      .argument("[data...]", "data file (CSV with a header row; comma, semicolon or tab), or site summaries written by summarize (pooled with site as a stratum); omitted with --correlations or --covariance")
      .option("--json", "print the result as one JSON document", false)
      .option("--csv", "print one CSV row per claim", false)
      .option("--fail-on-contradiction", "exit with code 3 when any claim is contradicted", false),
  )).action(async (graph: string, data: string[], opts: Record<string, unknown>) => {
    if (opts.json && opts.csv) throw new UsageError("choose one of --json and --csv");
    state.code = await (await import("./commands/test.js")).runTest(io, graph, data[0], opts, data.slice(1));
  });

  graphOptions(
    program
      .command("summarize")
      .description("write the statistics the audit of the graph needs from one site's data, with no row-level value, for pooling sites with test <graph> site-a.json site-b.json …")
      .argument("<graph>", "graph file")
      .argument("<data>", "data file of one site")
      .requiredOption("--out <file>", "site summary file to write (JSON); an existing file is overwritten")
      .option("--site <name>", "the site's name in the pooled audit (default: the data file's name without extension)")
      .option("--min-cell <k>", "disclosure control: no moment or table cell from fewer than k rows", numberIn("--min-cell", 3, 1e9, true), 5)
      .addOption(new Option("--method <method>", "the test each claim is summarized for, as test would choose it: auto: categorical claims as tables, the others as residual sums of the flexible test; linear: claims with scored x and y as moments; chisq: categorical claims as tables; rank: every claim as residual sums of the rank test; regression: binary and nominal pairs as scores of their logistic or multinomial model, the others as moments; claims a forced test does not take as under auto").choices(["auto", "linear", "chisq", "rank", "regression"]).default("auto"))
      .option("--missing <codes>", "extra missing-value codes, as for test")
      .option("--ignore <names>", "comma-separated columns to leave out")
      .option("--types <list>", 'declare variable types, e.g. "education=ordinal,region=nominal" (declare them alike at every site)')
      .option("--levels <list>", 'order levels, e.g. "education=low|mid|high" (every site must have the same levels)')
      .addOption(new Option("--delimiter <d>", "field delimiter (default: detected)").choices([",", ";", "tab", "\\t"]))
      .option("--decimal-comma", "numbers use a decimal comma (1,5)", false)
      .addOption(new Option("--engine <engine>", "data engine, as for test").choices(["auto", "memory", "duckdb"]).default("auto"))
      .option("--table <name>", "table of a DuckDB database file to read")
      .option("--counts <column>", "the data give one row per cell: this column holds each row's number of units")
      .option("--listwise", "use only rows complete on every measured variable", false)
      .option("--quiet", "print nothing but errors", false)
      .hook("preAction", (_cmd, action) => void readOptionsFrom(action.opts(), "")),
  ).action(async (graph: string, data: string, opts: Record<string, unknown>) => {
    state.code = await (await import("./commands/summarize.js")).runSummarize(io, graph, data, opts);
  });

  summaryOptions(auditOptions(
    program
      .command("report")
      .description("write an HTML (.html) or Markdown (.md) report of the audit, or its methods text alone (.txt)")
      .argument("<graph>", "graph file")
      .argument("[data...]", "data file, or site summaries written by summarize; omitted with --correlations or --covariance")
      .requiredOption("--out <file>", "report file: .html, .md (drawing saved beside it as .svg) or .txt (the methods text alone, ready to paste); an existing file is overwritten")
      .option("--fail-on-contradiction", "exit with code 3 when any claim is contradicted", false),
  )).action(async (graph: string, data: string[], opts: Record<string, unknown>) => {
    state.code = await (await import("./commands/report.js")).runReport(io, graph, data[0], opts, argv, false, data.slice(1));
  });

  program
    .command("draw")
    .description("draw the graph as SVG, optionally marked with a saved `test --json` result")
    .argument("<graph>", "graph file")
    .option("--out <file>", "SVG file to write (default: print to stdout)")
    .option("--results <result.json>", "mark the contradicted missing arrows from this result")
    .addOption(new Option("--format <format>", "graph file format").choices(["auto", "arrows", "dot"]).default("auto"))
    .option("--unmeasured <names>", "comma-separated nodes that are not in the data")
    .action(async (graph: string, opts: Record<string, unknown>) => {
      state.code = await (await import("./commands/draw.js")).runDraw(io, graph, opts);
    });

  summaryOptions(auditOptions(
    program
      .command("suggest")
      .description("propose arrows or shared causes that explain contradicted claims, greedily, with the revised graph (data-guided: needs subject-matter justification)")
      .argument("<graph>", "graph file")
      .argument("[data]", "data file; omitted with --correlations or --covariance")
      .option("--max-additions <k>", "most arrows or shared causes to add, one per step", numberIn("--max-additions", 1, 50, true), 3)
      .option("--out <file>", "write the revised graph (arrowaudit's graph format, each change with a comment)")
      .option("--json", "print the steps, candidates and revised graph as one JSON document", false),
  )).action(async (graph: string, data: string | undefined, opts: Record<string, unknown>) => {
    state.code = await (await import("./commands/suggest.js")).runSuggest(io, graph, data, opts);
  });

  graphOptions(
    program
      .command("power")
      .description("before the data: the smallest effect each claim could detect at a planned n, and the n that would detect a target effect")
      .argument("<graph>", "graph file")
      .requiredOption("--n <rows>", "planned number of rows", numberIn("--n", 1, 1e9, true))
      .option("--alpha <a>", "significance level", numberIn("--alpha", 1e-12, 0.5), 0.05)
      .addOption(new Option("--adjust <method>", "multiple-testing adjustment").choices(["holm", "bh", "none"]).default("holm"))
      .option("--power <p>", "power", numberIn("--power", 0.05, 0.999), 0.8)
      .option("--types <list>", 'variable types, e.g. "smoker=binary,education=ordinal" (others continuous)')
      .option("--levels <list>", 'levels of categorical variables, e.g. "education=low|mid|high" (default: binary 2, ordinal 4, nominal 3)')
      .option("--target-effect <e>", "add n_needed: the n at which each claim detects this |effect|", numberIn("--target-effect", 1e-6, 0.999))
      .option("--json", "print one JSON document", false)
      .option("--ascii", "ASCII output only: claims as x indep y given a, b", false),
  ).action(async (graph: string, opts: Record<string, unknown>) => {
    state.code = await (await import("./commands/power.js")).runPower(io, graph, opts);
  });

  program
    .command("simulate")
    .description("write invented data from the graph's structural model (linear Gaussian; binary, ordinal by thresholds; nominal by multinomial logit; <-> by a shared latent term)")
    .argument("<graph>", "graph file")
    .requiredOption("--n <rows>", "number of rows", numberIn("--n", 1, 10_000_000, true))
    .option("--seed <n>", "seed of the random streams", numberIn("--seed", 0, 2 ** 32 - 1, true), 1)
    .option("--effects <e>", 'weight of every arrow and <-> on standardised parents, or "random" (each ±U[0.1, 0.5])', (v: string) => {
      if (v === "random") return v;
      return numberIn("--effects", -10, 10)(v);
    }, 0.3)
    .option("--types <list>", 'variable types, e.g. "smoker=binary,education=ordinal,region=nominal" (others continuous)')
    .option("--missing-rate <r>", "share of written cells left empty, completely at random", numberIn("--missing-rate", 0, 0.99), 0)
    .option("--out <file>", "CSV file to write (default: standard output); the model goes beside it as <name>.model.json")
    .option("--model <file>", "write the model's coefficients (JSON) here instead")
    .addOption(new Option("--format <format>", "graph file format").choices(["auto", "arrows", "dot"]).default("auto"))
    .option("--unmeasured <names>", "comma-separated nodes to generate but not write")
    .option("--quiet", "print nothing but errors and the data", false)
    .action(async (graph: string, opts: Record<string, unknown>) => {
      state.code = await (await import("./commands/simulate.js")).runSimulate(io, graph, opts);
    });

  auditOptions(
    program
      .command("demo")
      .description("run the audit on the bundled invented demo cohort, print the equivalent test command, and write arrowaudit-demo-report.html")
      .option("--out <file>", "report file: .html, .md or .txt (the methods text alone)", "arrowaudit-demo-report.html"),
  ).action(async (opts: Record<string, unknown>) => {
    const dir = join(packageRoot(), "data", "demo");
    // The demo file codes missing BMI as -9 and missing blood pressure as 999, and has text education levels.
    opts.missing ??= "-9,999";
    opts.levels ??= "education=primary|secondary|tertiary";
    state.code = await (await import("./commands/report.js")).runReport(io, join(dir, "graph.txt"), join(dir, "cohort.csv"), { ...opts, printSummary: true }, argv, true);
  });
  return program;
}

/**
 * Run the CLI on `argv` (without the node and script entries) and return the exit code.
 * Never calls process.exit, so tests can run it in-process.
 */
export async function run(argv: string[], io: Io): Promise<number> {
  const state = { code: EXIT.ok as number };
  const program = buildProgram(io, state, argv);
  try {
    await program.parseAsync(argv, { from: "user" });
    return state.code;
  } catch (e) {
    if (e instanceof CommanderError) {
      if (e.code === "commander.helpDisplayed" || e.code === "commander.version" || e.code === "commander.help") return EXIT.ok;
      return EXIT.usage;
    }
    const { code, message } = exitFor(e);
    if (message !== "") io.stderr(message.endsWith("\n") ? message : message + "\n"); // "" after EPIPE: stop quietly
    return code;
  }
}

