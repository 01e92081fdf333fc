/**
 * The catalogue of hostile inputs to the command line: each row writes its files to a fresh
 * temporary folder, runs one command line and states the exit code and a fragment of the
 * message. Rows run in-process (test/helpers/runCli.ts) unless they need a real process (a
 * reader that closes standard output, a full device, a signal, another user), which runs
 * test/cli/catalogueChild.ts (cli/main.ts with a signal hook) under tsx.
 *
 * Every row also checks, whatever its command: every file the row wrote is unchanged afterwards
 * unless the row lists it in `written` (inputs are never modified), no temporary file is left
 * behind, no stack trace is printed, and the exit code is not 10 (internal error).
 *
 * To add a row: append an object to ROWS; `pins` says in one line which bug or rule it pins.
 * Exit codes are those of the README's "Exit codes" paragraph (cli/exitCodes.ts).
 */
import { spawn, spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import { chmodSync, closeSync, createWriteStream, existsSync, linkSync, mkdirSync, mkdtempSync, openSync, readdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { Readable } from "node:stream";
import { pathToFileURL } from "node:url";
import { afterAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";
import { EXTREME_CASES } from "./extremeCases.js";
import { MAX_DRAWN_NODES, MAX_LISTED_CLAIMS, MAX_TESTED_CLAIMS, MAX_TEXT_CLAIMS } from "../../cli/limits.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { graphSummary } from "../../src/graph/graphSummary.js";
import { readGraphSource } from "../../src/graph/readGraphSource.js";

const root = join(import.meta.dirname, "..", "..");
const GRAPH = readFileSync(join(root, "data", "demo", "graph.txt"), "utf8");
const COHORT = readFileSync(join(root, "data", "demo", "cohort.csv"), "utf8");
const DEMO = ["--missing", "-9,999", "--levels", "education=primary|secondary|tertiary"];
const CHAIN = "age -> bmi -> sbp\n";
const CHAIN_CSV = "age,bmi,sbp\n72,23.6,118\n74,25.5,140\n61,27.1,131\n55,30.2,150\n68,22.9,122\n";
const IS_ROOT = process.getuid?.() === 0;
const NOBODY = 65534; // the unprivileged "nobody" user and group of Debian and most Linux systems (common practice)

/** A process id that is certainly not running: a child that has already ended. */
const DEAD_PID = spawnSync(process.execPath, ["-e", ""]).pid!;

/** A seeded random DAG on `n` nodes v0…v(n-1) (each declared) with `m` arrows from lower to higher index (Park–Miller generator). */
function randomDag(n: number, m: number, seed = 1): string {
  let s = seed;
  const rnd = (k: number) => ((s = (s * 16807) % 2147483647), s % k);
  const seen = new Set<string>();
  const lines: string[] = [];
  const declared = Array.from({ length: n }, (_, i) => `v${i}`);
  while (lines.length < m) {
    let a = rnd(n);
    let b = rnd(n);
    if (a === b) continue;
    if (a > b) [a, b] = [b, a];
    const k = `${a} ${b}`;
    if (seen.has(k)) continue;
    seen.add(k);
    lines.push(`v${a} -> v${b}`);
  }
  return [...declared, ...lines].join("\n") + "\n";
}
const chainOf = (n: number) => Array.from({ length: n - 1 }, (_, i) => `c${i} -> c${i + 1}`).join("\n") + "\n";
const sha256 = (s: string | Uint8Array) => createHash("sha256").update(s).digest("hex"); // FIPS 180-4 SHA-256, node:crypto

/** A file of a row: text or bytes, a symbolic or hard link to another path, a folder, text with permission bits, or a named pipe that is fed this text once the run starts. */
type FileSpec = string | Uint8Array | { symlink: string } | { hardlink: string } | { folder: true } | { text: string; mode: number } | { fifo: string };

interface Outcome {
  code: number;
  stdout: string;
  stderr: string;
  dir: string;
  read: (name: string) => string;
}

interface Row {
  /** Which bug or rule the row pins, in one line. */
  pins: string;
  /** Files written to the row's folder before the run (links are made after the plain files). */
  files?: Record<string, FileSpec>;
  argv: string[];
  /** Bytes on standard input. */
  stdin?: string;
  code: number;
  /** A fragment of stderr; "" means stderr must be empty. */
  stderr?: string | RegExp;
  /** A fragment of stdout. */
  stdout?: string | RegExp;
  /** Files the run may create or change; every other file of the row must stay as it was. */
  written?: string[];
  /** Run in a real process: standard output closed by its reader or a full device, a signal at the write, another user. */
  process?: { stdout?: "closed-at-once" | "closed-after-first-chunk" | "dev-full"; signalAtWrite?: "SIGINT" | "SIGTERM"; asUser?: number };
  /** Further checks. */
  check?: (r: Outcome) => void;
}

const JSON_SHAPE = "expected an object with x, y, given, test, effect, ci, verdict, rank";
const aClaim = { x: "age", y: "sbp", given: ["bmi"], test: "gcm", effect: 0.2, ci: [0.1, 0.3], verdict: "contradicted", rank: 1 };
const results = (claims: unknown[]) => JSON.stringify({ claims });

const ROWS: Row[] = [
  // 1. Never destroy input.
  { pins: "report --out onto the graph file overwrote the graph and exited 0", files: { "g.html": GRAPH, "data.csv": COHORT }, argv: ["report", "g.html", "data.csv", "--out", "g.html"], code: 2, stderr: "--out g.html would overwrite the graph file g.html" },
  { pins: "report --out onto the data file (named .md) overwrote the data", files: { "g.txt": GRAPH, "d.md": COHORT }, argv: ["report", "g.txt", "d.md", "--out", "d.md"], code: 2, stderr: "--out d.md would overwrite the data file d.md" },
  { pins: "the drawing written beside a Markdown report (report.svg) overwrote an input of that name", files: { "report.svg": GRAPH, "data.csv": COHORT }, argv: ["report", "report.svg", "data.csv", "--out", "report.md"], code: 2, stderr: "the drawing report.svg written beside --out report.md would overwrite the graph file report.svg" },
  { pins: "an output reaching an input through ./ and .. is the same file", files: { "g.html": GRAPH, "sub/x": "", "data.csv": COHORT }, argv: ["report", "g.html", "data.csv", "--out", "./sub/../g.html"], code: 2, stderr: "would overwrite the graph file g.html" },
  { pins: "an output that is a symbolic link to an input is refused", files: { "g.txt": GRAPH, "data.csv": COHORT, "link.html": { symlink: "g.txt" } }, argv: ["report", "g.txt", "data.csv", "--out", "link.html"], code: 2, stderr: "--out link.html would overwrite the graph file g.txt (the same file, through a symbolic link)" },
  { pins: "an output in a symbolically linked folder that is an input is refused", files: { "g.html": GRAPH, "data.csv": COHORT, alias: { symlink: "." } }, argv: ["report", "g.html", "data.csv", "--out", "alias/g.html"], code: 2, stderr: "--out alias/g.html would overwrite the graph file g.html (the same file, through a symbolic link)" },
  { pins: "an output that is a hard link to an input is refused", files: { "g.txt": GRAPH, "data.csv": COHORT, "hard.html": { hardlink: "data.csv" } }, argv: ["report", "g.txt", "data.csv", "--out", "hard.html"], code: 2, stderr: "--out hard.html would overwrite the data file data.csv (the same file, through a hard link)" },
  { pins: "draw --out onto its graph file is refused", files: { "g.txt": GRAPH }, argv: ["draw", "g.txt", "--out", "g.txt"], code: 2, stderr: "--out g.txt would overwrite the graph file g.txt" },
  { pins: "draw --out onto its --results file is refused", files: { "g.txt": CHAIN, "r.json": results([aClaim]) }, argv: ["draw", "g.txt", "--results", "r.json", "--out", "r.json"], code: 2, stderr: "--out r.json would overwrite the results file r.json" },
  { pins: "demo --out through a link to the bundled demo graph is refused", files: { "x.html": { symlink: join(root, "data", "demo", "graph.txt") } }, argv: ["demo", "--out", "x.html", "--quiet"], code: 2, stderr: "would overwrite the graph file" },
  { pins: "an output that is a folder is refused before any work", files: { "g.txt": GRAPH, "data.csv": COHORT, "out.html": { folder: true } }, argv: ["report", "g.txt", "data.csv", "--out", "out.html"], code: 2, stderr: "out.html is a folder" },

  // 2. Standard output closed early, or full.
  { pins: "claims | true printed an EPIPE stack trace and exited 1", files: { "g.txt": randomDag(300, 900) }, argv: ["claims", "g.txt", "--json"], code: 0, stderr: "", process: { stdout: "closed-at-once" } },
  { pins: "claims | head printed an EPIPE stack trace and exited 1", files: { "g.txt": randomDag(300, 900) }, argv: ["claims", "g.txt"], code: 0, stderr: "", process: { stdout: "closed-after-first-chunk" } },
  { pins: "test | true printed an EPIPE stack trace and exited 1", files: { "g.txt": GRAPH, "d.csv": COHORT }, argv: ["test", "g.txt", "d.csv", ...DEMO, "--json"], code: 0, stderr: "", process: { stdout: "closed-at-once" } },
  { pins: "claims > /dev/full printed an ENOSPC stack trace", files: { "g.txt": GRAPH }, argv: ["claims", "g.txt", "--json"], code: 4, stderr: "cannot write to standard output: no space left on the device (ENOSPC)", process: { stdout: "dev-full" } },
  { pins: "draw --out /dev/full is an output error, written in place (never renamed over the device)", files: { "g.txt": CHAIN }, argv: ["draw", "g.txt", "--out", "/dev/full"], code: 4, stderr: "cannot write /dev/full: no space left on the device (ENOSPC)" },
  { pins: "an output in a folder that does not exist is an output error naming it", files: { "g.txt": CHAIN }, argv: ["draw", "g.txt", "--out", "nowhere/g.svg"], code: 4, stderr: "cannot write nowhere/g.svg: no such file or folder (ENOENT)" },

  // 3. Folders and permissions.
  { pins: "a folder as the data file of test was an internal error (EISDIR, exit 10)", files: { "g.txt": CHAIN, "data/x.csv": CHAIN_CSV }, argv: ["test", "g.txt", "data/"], code: 2, stderr: "data/: cannot read the data file: it is a folder, not a file (EISDIR)" },
  { pins: "a folder as claims --columns was an internal error", files: { "g.txt": CHAIN, "data/x.csv": CHAIN_CSV }, argv: ["claims", "g.txt", "--columns", "data"], code: 2, stderr: "data: cannot read the data file: it is a folder" },
  { pins: "a folder as the data file of report was an internal error", files: { "g.txt": CHAIN, "data/x.csv": CHAIN_CSV }, argv: ["report", "g.txt", "data", "--out", "r.html"], code: 2, stderr: "data: cannot read the data file: it is a folder" },
  { pins: "a folder as draw --results was an internal error", files: { "g.txt": CHAIN, "dir/r.json": "{}" }, argv: ["draw", "g.txt", "--results", "dir/"], code: 2, stderr: "dir/: cannot read the results file: it is a folder" },
  { pins: "a folder as the graph file names it", files: { "gdir/g.txt": CHAIN, "d.csv": CHAIN_CSV }, argv: ["test", "gdir", "d.csv"], code: 2, stderr: "gdir: cannot read the graph file: it is a folder" },
  { pins: "a missing data file names it", files: { "g.txt": CHAIN }, argv: ["test", "g.txt", "nothere.csv"], code: 2, stderr: "nothere.csv: cannot read the data file: no such file or folder (ENOENT); check the path" },
  {
    pins: "an unreadable data file said 'check the path' instead of permission denied",
    files: { "g.txt": CHAIN, "secret.csv": { text: CHAIN_CSV, mode: 0o000 } },
    argv: ["test", "g.txt", "secret.csv"],
    code: 2,
    stderr: "secret.csv: cannot read the data file: permission denied (EACCES)",
    ...(IS_ROOT ? { process: { asUser: NOBODY } } : {}),
  },
  {
    pins: "an unreadable graph file says permission denied",
    files: { "g.txt": { text: CHAIN, mode: 0o000 } },
    argv: ["claims", "g.txt"],
    code: 2,
    stderr: "g.txt: cannot read the graph file: permission denied (EACCES)",
    ...(IS_ROOT ? { process: { asUser: NOBODY } } : {}),
  },

  // 4. Standard input.
  { pins: "claims - reads the graph from standard input", argv: ["claims", "-"], stdin: CHAIN, code: 0, stdout: "age ⫫ sbp | bmi" },
  { pins: "a graph error on standard input names it", argv: ["claims", "-"], stdin: "a -> b -> a\n", code: 2, stderr: "standard input" },
  { pins: "claims --columns - reads the header from standard input", files: { "g.txt": CHAIN }, argv: ["claims", "g.txt", "--columns", "-"], stdin: "age,bmi,sbp,extra\n1,2,3,4\n", code: 0, stdout: "columns not in the graph (ignored): extra" },
  { pins: "test - data.csv reads the graph from standard input", files: { "d.csv": COHORT }, argv: ["test", "-", "d.csv", ...DEMO], stdin: GRAPH, code: 0, stdout: "d.csv: 3,000 rows read" },
  { pins: "test graph - reads the data from standard input with the streaming reader", files: { "g.txt": GRAPH }, argv: ["test", "g.txt", "-", ...DEMO], stdin: COHORT, code: 0, stdout: "standard input: 3,000 rows read" },
  { pins: "a data error on standard input names it with its line", files: { "g.txt": CHAIN }, argv: ["test", "g.txt", "-"], stdin: "age,bmi,sbp\n1,2,3\n4,5\n", code: 2, stderr: "standard input:3" },
  { pins: "the graph and the data cannot both come from standard input", argv: ["test", "-", "-"], stdin: CHAIN, code: 1, stderr: "the graph and the data cannot both be read from standard input (-)" },
  { pins: "claims - --columns - is a usage error", argv: ["claims", "-", "--columns", "-"], stdin: CHAIN, code: 1, stderr: "cannot both be read from standard input" },
  {
    pins: "report of data on standard input records it and the SHA-256 of the bytes read, not of a file",
    files: { "g.txt": GRAPH },
    argv: ["report", "g.txt", "-", ...DEMO, "--out", "r.md"],
    stdin: COHORT,
    code: 0,
    written: ["r.md", "r.svg"],
    check: (r) => {
      const md = r.read("r.md");
      expect(md).toContain(`SHA-256 of standard input:** \`${sha256(COHORT)}\``);
      expect(md).toContain(`SHA-256 of g.txt:** \`${sha256(GRAPH)}\``);
    },
  },
  { pins: "a data file that is a pipe (<(zcat d.csv.gz)) lost its first bytes to the header peek; it is read once, as a stream", files: { "g.txt": GRAPH, "pipe.csv": { fifo: COHORT } }, argv: ["test", "g.txt", "pipe.csv", ...DEMO], code: 0, stdout: "pipe.csv: 3,000 rows read" },
  { pins: "a graph file that is a pipe is read once", files: { "g.fifo": { fifo: CHAIN } }, argv: ["claims", "g.fifo"], code: 0, stdout: "age ⫫ sbp | bmi" },
  {
    pins: "report of data from a pipe hashes the bytes read (hashing the pipe again would wait forever)",
    files: { "g.txt": GRAPH, "pipe.csv": { fifo: COHORT } },
    argv: ["report", "g.txt", "pipe.csv", ...DEMO, "--out", "r.md"],
    code: 0,
    written: ["r.md", "r.svg"],
    check: (r) => expect(r.read("r.md")).toContain(`SHA-256 of pipe.csv:** \`${sha256(COHORT)}\``),
  },
  { pins: "draw - draws a graph from standard input", argv: ["draw", "-"], stdin: CHAIN, code: 0, stdout: /^<svg/ },
  { pins: "draw --results - reads the results from standard input", files: { "g.txt": CHAIN }, argv: ["draw", "g.txt", "--results", "-"], stdin: results([aClaim]), code: 0, stdout: 'class="contradiction"' },

  // 5. Interrupts and partial files.
  {
    pins: "SIGINT while report was writing left a full-size temporary file",
    files: { "g.txt": GRAPH, "d.csv": COHORT, "r.md": "old report\n", "r.svg": "old drawing\n" },
    argv: ["report", "g.txt", "d.csv", ...DEMO, "--out", "r.md"],
    code: 130,
    written: ["r.md", "r.svg"],
    process: { signalAtWrite: "SIGINT" },
    check: (r) => {
      // replaced together: the new report and the new drawing
      expect(r.read("r.md")).toContain("![Causal graph");
      expect(r.read("r.svg").startsWith("<svg")).toBe(true);
    },
  },
  { pins: "SIGTERM while draw was writing exits 143 with the file complete", files: { "g.txt": GRAPH }, argv: ["draw", "g.txt", "--out", "g.svg"], code: 143, written: ["g.svg"], process: { signalAtWrite: "SIGTERM" }, check: (r) => expect(r.read("g.svg")).toMatch(/<\/svg>$/) },
  {
    pins: "temporaries left by a killed run (SIGKILL) are removed by the next run writing the same file; a running process's are kept",
    files: {
      "g.txt": GRAPH,
      "d.csv": COHORT,
      [`.r.md.arrowaudit-${DEAD_PID}-0123456789ab.tmp`]: "partial repo",
      [`.r.svg.arrowaudit-${DEAD_PID}-0123456789ab.tmp`]: "",
      [`.r.md.arrowaudit-${process.ppid}-aaaaaaaaaaaa.tmp`]: "another run, still going",
    },
    argv: ["report", "g.txt", "d.csv", ...DEMO, "--out", "r.md"],
    code: 0,
    written: ["r.md", "r.svg", `.r.md.arrowaudit-${DEAD_PID}-0123456789ab.tmp`, `.r.svg.arrowaudit-${DEAD_PID}-0123456789ab.tmp`],
    check: (r) => {
      expect(existsSync(join(r.dir, `.r.md.arrowaudit-${DEAD_PID}-0123456789ab.tmp`))).toBe(false);
      expect(existsSync(join(r.dir, `.r.svg.arrowaudit-${DEAD_PID}-0123456789ab.tmp`))).toBe(false);
      expect(r.read(`.r.md.arrowaudit-${process.ppid}-aaaaaaaaaaaa.tmp`)).toBe("another run, still going");
    },
  },

  // 6. Claims of a large graph, written as they are derived.
  {
    pins: "claims --json of a large graph built one string (Invalid string length at 5,000 nodes); the streamed document equals JSON.stringify of the result",
    files: { "g.txt": randomDag(300, 900) },
    argv: ["claims", "g.txt", "--json"],
    code: 0,
    check: (r) => {
      const graph = readGraphSource(new TextEncoder().encode(r.read("g.txt")), { file: "g.txt" }).graph;
      const d = deriveClaims(graph);
      expect(r.stdout).toBe(JSON.stringify({ graph: graphSummary(graph), claims: d.claims, untestable: d.untestable }, null, 2) + "\n");
    },
  },
  {
    pins: "the streamed JSON keeps untestable entries and the all-minimal keys",
    files: { "g.txt": GRAPH },
    argv: ["claims", "g.txt", "--json", "--sets", "all-minimal", "--max-sets", "2"],
    code: 0,
    check: (r) => {
      const graph = readGraphSource(new TextEncoder().encode(GRAPH), { file: "g.txt" }).graph;
      const d = deriveClaims(graph, { sets: "all-minimal", cap: 2 });
      expect(d.untestable.length).toBeGreaterThan(0);
      const doc = { graph: graphSummary(graph), claims: d.claims, untestable: d.untestable, max_sets: 2, truncated_pairs: d.truncatedPairs };
      expect(r.stdout).toBe(JSON.stringify(doc, null, 2) + "\n");
    },
  },

  // 7. Graphs too large to list or test, and graph building that was quadratic or recursive.
  { pins: "claims of a long chain ran out of memory (exit 134); the claims are counted first", files: { "g.txt": chainOf(10_100) }, argv: ["claims", "g.txt", "--json"], code: 2, stderr: `missing arrows among them, one claim each; claims lists at most ${MAX_LISTED_CLAIMS.toLocaleString("en-US")}` },
  { pins: "the text listing of a 2,100-node chain (2.2 million claims) would be one text past the renderer's reach; it points to --json", files: { "g.txt": chainOf(2_100) }, argv: ["claims", "g.txt"], code: 2, stderr: `the text listing of claims holds at most ${MAX_TEXT_CLAIMS.toLocaleString("en-US")} (see Limits in the README); use --json` },
  { pins: "test of a long chain ran out of memory; refused before the data are read", files: { "g.txt": chainOf(1_500), "d.csv": CHAIN_CSV }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: `test and report test at most ${MAX_TESTED_CLAIMS.toLocaleString("en-US")}` },
  { pins: "a graph with 30,000 separate arrows took minutes to build (the ready list was re-sorted at every step)", files: { "g.txt": Array.from({ length: 30_000 }, (_, i) => `a${i} -> b${i}`).join("\n") + "\n" }, argv: ["claims", "g.txt"], code: 2, stderr: "60,000 measured nodes" },
  { pins: "a cycle of 100,000 nodes overflowed the stack while being named (exit 10)", files: { "g.txt": chainOf(100_000) + "c99999 -> c0\n" }, argv: ["claims", "g.txt"], code: 2, stderr: "cycle: c0 -> c1 -> c2" },

  // 8. Drawing large graphs.
  {
    pins: "draw of 1,500 nodes took minutes with no word of progress; it uses the simple layered layout and says so",
    files: { "g.txt": randomDag(1_500, 4_500) },
    argv: ["draw", "g.txt", "--out", "g.svg"],
    code: 0,
    written: ["g.svg"],
    stderr: "drawn with the simple layered layout",
    check: (r) => {
      const svg = r.read("g.svg");
      expect(svg).toContain('class="layout-note"');
      expect((svg.match(/<g class="node measured"/g) ?? []).length).toBe(1_500);
    },
  },
  { pins: "draw of more nodes than can be read is refused saying how to draw a part", files: { "g.txt": Array.from({ length: MAX_DRAWN_NODES + 1 }, (_, i) => `n${i}`).join("\n") + "\n" }, argv: ["draw", "g.txt"], code: 2, stderr: "draw the part you want to see" },

  // 9. Validating draw --results.
  { pins: 'draw --results accepted "constructor" (a property of every object) as a test name', files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, test: "constructor" }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "r.json: claims[0].test" },
  { pins: 'draw --results {"claims":[null]} crashed', files: { "g.txt": CHAIN, "r.json": results([null]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: `r.json: claims[0] is null; ${JSON_SHAPE}` },
  { pins: "draw --results with missing fields drew 'undefined = n/a'", files: { "g.txt": CHAIN, "r.json": results([{ x: "age", y: "sbp", verdict: "contradicted", rank: 1 }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "r.json: claims[0].given is missing; expected a list of node names" },
  { pins: "a results claim with a non-numeric effect is refused with its place", files: { "g.txt": CHAIN, "r.json": results([aClaim, { ...aClaim, effect: "big" }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: 'claims[1].effect is "big"; expected a number from -1 to 1' },
  { pins: "a results claim with a one-sided interval is refused", files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, ci: [0.1] }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "claims[0].ci is a list of 1; expected two numbers [lower, upper]" },
  { pins: "a results claim with an unknown verdict is refused", files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, verdict: "maybe" }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: 'claims[0].verdict is "maybe"; expected "contradicted" or "consistent"' },
  { pins: "a results claim with an unknown test is refused", files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, test: "t-test" }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "claims[0].test is \"t-test\"; expected one of gcm" },
  { pins: "a results claim with rank 0 is refused", files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, rank: 0 }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "claims[0].rank is 0; expected a whole number from 1" },
  { pins: "a results given set holding a number is refused", files: { "g.txt": CHAIN, "r.json": results([{ ...aClaim, given: ["bmi", 3] }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "claims[0].given[1] is 3; expected a node name" },
  { pins: "a results document that is a list is refused", files: { "g.txt": CHAIN, "r.json": "[]" }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: 'r.json: the document is a list of 0; expected an object with a "claims" list' },
  { pins: "a results document without claims is refused", files: { "g.txt": CHAIN, "r.json": "{}" }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: '"claims" is missing; expected a list of claims' },
  { pins: "a results file that is not JSON is refused", files: { "g.txt": CHAIN, "r.json": "{claims" }, argv: ["draw", "g.txt", "--results", "r.json"], code: 2, stderr: "r.json: not a JSON document" },
  { pins: "a valid results file draws its contradiction", files: { "g.txt": CHAIN, "r.json": results([aClaim, { ...aClaim, verdict: "consistent", rank: 2 }]) }, argv: ["draw", "g.txt", "--results", "r.json"], code: 0, stdout: 'class="contradiction" data-x="age" data-y="sbp"' },

  // 10. Reading data files as they come from spreadsheets, statistics packages and other countries (readingCsv below).
  { pins: "a header over 1 MiB (9,003 columns) was cut, and its last columns reported missing", files: { "g.txt": CHAIN, "d.csv": wideCsv(9_003) }, argv: ["test", "g.txt", "d.csv"], code: 0, stdout: "d.csv: 60 rows read" },
  { pins: "decimal commas in a ;-file read without --decimal-comma became nominal columns tested by chi-square", files: { "g.txt": CHAIN, "d.csv": readingCsv({ sep: ";", mark: "," }) }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: /d\.csv:2: column "age" has 60 numbers written with a decimal comma .*; read it with --decimal-comma/ },
  { pins: "the same file with --decimal-comma is read as numbers", files: { "g.txt": CHAIN, "d.csv": readingCsv({ sep: ";", mark: "," }) }, argv: ["test", "g.txt", "d.csv", "--decimal-comma"], code: 0, stdout: "age (continuous*), bmi (continuous*), sbp (continuous*)" },
  { pins: "a UTF-16 file without a byte-order mark got 'did you mean' the same names", files: { "g.txt": CHAIN, "d.csv": new Uint8Array(Buffer.from(readingCsv(), "utf16le")) }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: "d.csv:1: the file is not UTF-8 text: line 1 has a NUL byte (0x00); every other byte is NUL, so this looks like UTF-16" },
  { pins: "a UTF-16 file with a byte-order mark (a spreadsheet's Unicode text) is read", files: { "g.txt": CHAIN, "d.csv": new Uint8Array(Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(readingCsv(), "utf16le")])) }, argv: ["test", "g.txt", "d.csv"], code: 0, stdout: "d.csv: 60 rows read" },
  { pins: "a Latin-1 byte in the data is an input error naming the file and its line", files: { "g.txt": CHAIN, "d.csv": Uint8Array.from(readingCsv({ extra: ["town", (i) => (i === 41 ? "Z\u00fcrich" : "Bergen")] }), (c) => c.charCodeAt(0)) }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: "d.csv:43: the file is not UTF-8 text: line 43 has the byte 0xFC, which is not valid UTF-8; save the file as CSV UTF-8" },
  { pins: "a binary file (a spreadsheet saved as .csv) is not UTF-8 text, with the hint", files: { "g.txt": CHAIN, "d.csv": Uint8Array.of(0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00, 0x08, 0x00) }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: "looks like a spreadsheet or ZIP archive" },
  { pins: "a graph name in NFC against a header in NFD got 'âge (did you mean âge?)'", files: { "g.txt": "\u00e2ge -> bmi -> sbp\n", "d.csv": readingCsv({ names: ["a\u0302ge", "bmi", "sbp"] }) }, argv: ["test", "g.txt", "d.csv"], code: 0, stdout: /they were matched after normalising\s+both to NFC/ },
  { pins: "two columns whose names differ only in Unicode form are an input error", files: { "g.txt": CHAIN, "d.csv": readingCsv({ extra: ["a\u0302ge", () => "1"], names: ["\u00e2ge", "bmi", "sbp"] }) }, argv: ["claims", "g.txt", "--columns", "d.csv"], code: 2, stderr: "written in two Unicode forms (NFC and NFD)" },
  { pins: "--decimal-comma --delimiter , is a usage error whatever the file holds", files: { "g.txt": CHAIN }, argv: ["test", "g.txt", "nothere.csv", "--decimal-comma", "--delimiter", ","], code: 1, stderr: "--decimal-comma needs a semicolon or tab delimiter" },
  { pins: "--decimal-comma on a comma-separated file said '--columns: column \"age\" is not in the file header'", files: { "g.txt": CHAIN, "d.csv": readingCsv() }, argv: ["test", "g.txt", "d.csv", "--decimal-comma"], code: 1, stderr: "d.csv:1: --decimal-comma is for files separated by semicolons or tabs, but this header is separated by commas" },
  { pins: "a ragged row reported '--columns: column \"age\" is not in the file header', an option never given", files: { "g.txt": CHAIN, "d.csv": "age,bmi,sbp\n1,2\n" }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: "d.csv:2: row has 2 fields but the header has 3; check the delimiter and quoting on this line" },
  { pins: "a header-only file gave exit 0 and '0 rows read'", files: { "g.txt": CHAIN, "d.csv": "age,bmi,sbp\n" }, argv: ["test", "g.txt", "d.csv"], code: 2, stderr: "d.csv: the file has a header line but no data rows" },
  { pins: "R's write.csv (an unnamed row-name column) was refused with 'column 1 has an empty name'", files: { "g.txt": CHAIN, "d.csv": readingCsv({ rNames: true }) }, argv: ["test", "g.txt", "d.csv"], code: 0, stdout: /column 1 has no name: it was read as row labels/ },
  { pins: "--ignore leaves columns out of test", files: { "g.txt": CHAIN, "d.csv": readingCsv({ extra: ["id", (i) => `P${i}`] }) }, argv: ["test", "g.txt", "d.csv", "--ignore", "id"], code: 0, stdout: "d.csv: 60 rows read" },
  { pins: "--ignore naming a measured node of the graph is a usage error saying what to do", files: { "g.txt": CHAIN, "d.csv": readingCsv() }, argv: ["test", "g.txt", "d.csv", "--ignore", "bmi"], code: 1, stderr: '--ignore: "bmi" is a measured node of the graph, which the audit needs; remove it from --ignore, or declare it unmeasured (--unmeasured bmi)' },
  { pins: "--ignore naming no column is a usage error with a suggestion", files: { "g.txt": CHAIN, "d.csv": readingCsv({ extra: ["id", (i) => `P${i}`] }) }, argv: ["test", "g.txt", "d.csv", "--ignore", "ID"], code: 1, stderr: '--ignore: column "ID" is not in the file header (age, bmi, sbp, id); did you mean "id"?' },
  { pins: "an ID-like column in a claim took 34 s to end untestable; it is named up front with --ignore", files: { "g.txt": "age -> pid -> sbp\n", "d.csv": readingCsv({ names: ["age", "bmi", "sbp"], extra: ["pid", (i) => `P${i}`] }) }, argv: ["test", "g.txt", "d.csv", "--ignore", "bmi"], code: 0, stdout: /column "pid" has 60 levels among 60 observed rows \(more than half of them, and more than\s+50\), like an identifier, so claims that involve it cannot be tested; leave it out \(--ignore pid,\s+or --unmeasured pid/ },
  { pins: "per-column missing codes: 0 is unknown in fage, a real value in kids", files: { "g.txt": "fage -> kids -> sbp\n", "d.csv": readingCsv({ names: ["fage", "kids", "sbp"], zeros: true }) }, argv: ["test", "g.txt", "d.csv", "--missing", "fage=0,-9", "--json"], code: 0, check: (r) => expect(JSON.parse(r.stdout).variables.map((v: { name: string; missing: number }) => [v.name, v.missing])).toEqual([["fage", 6], ["kids", 0], ["sbp", 0]]) },
  { pins: "a numeric sentinel far outside a column's values is named with the --missing that declares it", files: { "g.txt": GRAPH, "d.csv": COHORT }, argv: ["test", "g.txt", "d.csv", "--levels", "education=primary|secondary|tertiary"], code: 0, stdout: /column "sbp" has 65 cells of 999, beyond its other values \(71 to 178\) by more than their\s+interquartile range \(20\)/ },
  { pins: "an unclosed quote in --missing is a usage error", files: { "g.txt": CHAIN, "d.csv": readingCsv() }, argv: ["test", "g.txt", "d.csv", "--missing", '"open'], code: 1, stderr: "--missing: a double quote is never closed" },
  { pins: "a column named constructor with --types, --levels and --missing crashed ('declaredLevels is not iterable')", files: { "g.txt": "constructor -> __proto__ -> toString\n", "d.csv": readingCsv({ names: ["constructor", "__proto__", "toString"], zeros: true }) }, argv: ["test", "g.txt", "d.csv", "--types", "constructor=continuous,toString=continuous", "--levels", "__proto__=0|1|2|3", "--missing", "constructor=0"], code: 0, stdout: "variables: constructor (continuous, 6 missing), __proto__ (ordinal), toString (continuous)" },
  // 11. Messages that quote the inputs are shown, not obeyed, and said once.
  { pins: "claims --columns printed an extra column's name raw (an escape sequence in the header drove the terminal)", files: { "g.txt": CHAIN, "d.csv": 'age,bmi,sbp,"z\u001b[31mred"\n1,2,3,4\n' }, argv: ["claims", "g.txt", "--columns", "d.csv"], code: 0, stdout: "columns not in the graph (ignored): z\\x1b[31mred", check: (r) => expect(r.stdout + r.stderr).not.toContain("\u001b") },
  { pins: "graph warnings printed quoted names raw", files: { "g.txt": 'age -> bmi\n"a\u001b[2Jx" -> bmi\n"a\u001b[2Jx" -> bmi\n' }, argv: ["claims", "g.txt"], code: 0, stderr: 'g.txt:3: arrow "a\\x1b[2Jx" -> bmi is declared twice', check: (r) => expect(r.stdout + r.stderr).not.toContain("\u001b") },
  { pins: "commander echoed a typed option raw in its error", files: { "g.txt": CHAIN }, argv: ["claims", "g.txt", "--fo\u001b[2Jo"], code: 1, stderr: "unknown option '--fo\\x1b[2Jo'", check: (r) => expect(r.stderr).not.toContain("\u001b") },
  { pins: "an arrow repeated 2,000 times on one line printed 1,999 warnings", files: { "g.txt": `age -> ${Array(2000).fill("bmi").join(", ")}\nbmi -> sbp\n` }, argv: ["claims", "g.txt"], code: 0, stderr: "g.txt:1: arrow age -> bmi is declared 2,000 times (first on line 1, again on line 1); the duplicates are ignored", check: (r) => expect(r.stderr.trim().split("\n")).toHaveLength(1) },
  { pins: "the warning said an identifier column's claims cannot be tested, but they were tested (one count per cell)", files: { "g.txt": "age -> bmi -> sbp\npid\n", "d.csv": readingCsv({ extra: ["pid", (i) => `P${i}`] }) }, argv: ["test", "g.txt", "d.csv", "--json"], code: 0, check: (r) => {
    const doc = JSON.parse(r.stdout) as { claims: { x: string; y: string; given: string[] }[]; untestable: { x: string; y: string; reason: string }[] };
    expect(doc.claims.some((c) => [c.x, c.y, ...c.given].includes("pid"))).toBe(false);
    const pid = doc.untestable.filter((u) => u.x === "pid" || u.y === "pid");
    expect(pid).toHaveLength(3);
    for (const u of pid) expect(u.reason).toMatch(/"pid" has 60 levels among 60 observed rows/);
  } },
  // 12. Extreme numbers, hostile names and deep graphs (test/cli/extremeCases.ts).
  ...EXTREME_CASES.map((c): Row => {
    const out = c.argv[c.argv.indexOf("--out") + 1];
    return {
      pins: c.name,
      files: c.files,
      argv: c.argv,
      code: c.code,
      ...(c.argv.includes("--out") && out ? { written: [out, out.replace(/\.md$/, ".svg")] } : {}),
      check: (r) => {
        expect(r.stdout + r.stderr).toContain(c.fragment);
        if (c.absent !== undefined) expect(r.stdout + r.stderr).not.toContain(c.absent);
      },
    };
  }),
];

/**
 * A seeded CSV of 60 rows for the reading rows: age, bmi, sbp (or `names`), written with `sep`
 * and decimal `mark`, optionally with R's unnamed row-name column first, `extra` columns (a
 * name and a cell per row index), or zeros in the first column every tenth row.
 */
function readingCsv(o: { sep?: string; mark?: string; names?: string[]; rNames?: boolean; extra?: [string, (i: number) => string]; zeros?: boolean } = {}): string {
  const sep = o.sep ?? ",";
  let s = 11;
  const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  const head = [...(o.rNames ? ['""'] : []), ...(o.names ?? ["age", "bmi", "sbp"]), ...(o.extra ? [o.extra[0]] : [])];
  const lines = [head.join(sep)];
  for (let i = 0; i < 60; i++) {
    const age = 40 + rnd() * 40;
    const bmi = 20 + rnd() * 10;
    const sbp = 100 + 0.5 * age + bmi + rnd() * 10;
    const cells = [o.zeros && i % 10 === 0 ? "0" : age.toFixed(1), o.zeros ? String(Math.floor(rnd() * 4)) : bmi.toFixed(2), sbp.toFixed(1)].map((c) => c.replace(".", o.mark ?? "."));
    lines.push([...(o.rNames ? [`"${i + 1}"`] : []), ...cells, ...(o.extra ? [o.extra[1](i)] : [])].join(sep));
  }
  return lines.join("\n") + "\n";
}

/** A CSV whose header holds `n` columns of about 126 characters (over 1 MiB for 9,003), age, bmi and sbp last. */
function wideCsv(n: number): string {
  const base = readingCsv().trimEnd().split("\n").map((l) => l.split(","));
  const pad = Array.from({ length: n - 3 }, (_, i) => `unused_${String(i).padStart(5, "0")}_${"x".repeat(112)}`);
  return base.map((cells, r) => [...(r === 0 ? pad : pad.map((_, i) => String(i % 10))), ...cells].join(",")).join("\n") + "\n";
}

const work = mkdtempSync(join(tmpdir(), "arrowaudit-catalogue-"));
if (IS_ROOT) chmodSync(work, 0o755); // rows run as another user must reach their folder
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** Write a row's files into `dir`: plain files and folders first, then links. */
function writeFiles(dir: string, files: Record<string, FileSpec>): void {
  const entries = Object.entries(files);
  for (const [name, spec] of entries) {
    const full = join(dir, name);
    mkdirSync(dirname(full), { recursive: true });
    if (typeof spec === "string" || spec instanceof Uint8Array) writeFileSync(full, spec);
    else if ("folder" in spec) mkdirSync(full, { recursive: true });
    else if ("text" in spec) {
      writeFileSync(full, spec.text);
      chmodSync(full, spec.mode);
    } else if ("fifo" in spec) expect(spawnSync("mkfifo", [full]).status).toBe(0);
  }
  for (const [name, spec] of entries) {
    if (typeof spec === "string" || spec instanceof Uint8Array) continue;
    if ("symlink" in spec) symlinkSync(spec.symlink, join(dir, name));
    else if ("hardlink" in spec) linkSync(join(dir, spec.hardlink), join(dir, name));
  }
}

/** The bytes of the row's plain files, for the unchanged-input check (links and unreadable files are left out). */
function snapshot(dir: string, files: Record<string, FileSpec>): Map<string, Buffer> {
  const out = new Map<string, Buffer>();
  for (const [name, spec] of Object.entries(files)) {
    if (typeof spec === "string" || spec instanceof Uint8Array) out.set(name, readFileSync(join(dir, name)));
  }
  return out;
}

async function runInProcess(row: Row, dir: string): Promise<{ code: number; stdout: string; stderr: string }> {
  // Feed the named pipes: each open waits (on a thread of the pool) until the run opens the pipe to read it.
  for (const [name, spec] of Object.entries(row.files ?? {})) if (typeof spec === "object" && "fifo" in spec) createWriteStream(join(dir, name)).end(spec.fifo);
  return runCli(row.argv, { cwd: dir, ...(row.stdin !== undefined ? { stdin: Readable.from([Buffer.from(row.stdin)]) } : {}) });
}

const tsxLoader = pathToFileURL(createRequire(join(root, "package.json")).resolve("tsx")).href;
const childScript = join(root, "test", "cli", "catalogueChild.ts");

function runInChild(row: Row, dir: string): Promise<{ code: number; stdout: string; stderr: string }> {
  const p = row.process!;
  const devFull = p.stdout === "dev-full" ? openSync("/dev/full", "w") : undefined;
  const child = spawn(process.execPath, ["--import", tsxLoader, childScript, ...row.argv], {
    cwd: dir,
    stdio: ["pipe", devFull ?? "pipe", "pipe"],
    env: { PATH: process.env.PATH, HOME: tmpdir(), ...(p.signalAtWrite ? { CATALOGUE_SIGNAL_AT_WRITE: p.signalAtWrite } : {}) },
    ...(p.asUser !== undefined ? { uid: p.asUser, gid: p.asUser } : {}),
  });
  if (devFull !== undefined) closeSync(devFull);
  let stdout = "";
  let stderr = "";
  child.stderr!.on("data", (d: Buffer) => (stderr += d.toString()));
  if (p.stdout === "closed-at-once") child.stdout!.destroy();
  else if (p.stdout === "closed-after-first-chunk") child.stdout!.once("data", (d: Buffer) => ((stdout += d.toString()), child.stdout!.destroy()));
  else child.stdout?.on("data", (d: Buffer) => (stdout += d.toString()));
  child.stdin!.end(row.stdin ?? "");
  return new Promise((resolve, reject) => {
    child.on("error", reject);
    child.on("close", (code, signal) => resolve({ code: code ?? 128 + (signal === "SIGINT" ? 2 : 15), stdout, stderr }));
  });
}

describe("catalogue of hostile command lines", () => {
  ROWS.forEach((row, i) => {
    it(`${row.pins}: arrowaudit ${row.argv.join(" ").slice(0, 80)} → exit ${row.code}`, async () => {
      const dir = join(work, `row${i}`);
      mkdirSync(dir);
      if (row.process?.asUser !== undefined) chmodSync(dir, 0o777);
      const files = row.files ?? {};
      writeFiles(dir, files);
      const before = snapshot(dir, files);
      const r = row.process ? await runInChild(row, dir) : await runInProcess(row, dir);
      const outcome: Outcome = { ...r, dir, read: (name) => readFileSync(join(dir, name), "utf8") };
      const context = `exit ${r.code}\nstderr: ${r.stderr.slice(0, 2000)}`;
      expect(r.code, context).toBe(row.code);
      if (row.stderr === "") expect(r.stderr).toBe("");
      else if (typeof row.stderr === "string") expect(r.stderr).toContain(row.stderr);
      else if (row.stderr) expect(r.stderr).toMatch(row.stderr);
      if (typeof row.stdout === "string") expect(r.stdout).toContain(row.stdout);
      else if (row.stdout) expect(r.stdout).toMatch(row.stdout);
      // Invariants of every row.
      expect(r.stderr).not.toMatch(/^\s+at /m); // no stack trace
      expect(r.code).not.toBe(10);
      for (const [name, bytes] of before) {
        if (row.written?.includes(name)) continue;
        expect(readFileSync(join(dir, name)).equals(bytes), `${name} was modified`).toBe(true);
      }
      const temps = readdirSync(dir).filter((f) => f.endsWith(".tmp") && !(f in files));
      expect(temps, "temporary files left behind").toEqual([]);
      row.check?.(outcome);
    });
  });
});
