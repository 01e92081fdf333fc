/**
 * Mutation fuzzing of the command line: seeded random edits of a valid graph file and a valid
 * CSV file (bytes inserted, deleted, duplicated and replaced, lines repeated and swapped, cells
 * replaced, and
 * tokens that reviewers found dangerous: huge and subnormal numbers, quotes, separators, control
 * characters, names that are properties of every JavaScript object) are run through `claims` and
 * `test`, in-process. Whatever the input, the command must end with a documented exit code
 * other than 10 (internal error), print no stack trace, and print valid JSON whenever `--json`
 * exits 0. fast-check with the suite's fixed seed (test/setup.ts); FUZZ_RUNS=<n> runs longer.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import fc from "fast-check";
import { afterAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";

const RUNS = Number(process.env.FUZZ_RUNS ?? 60);
const work = mkdtempSync(join(tmpdir(), "arrowaudit-fuzz-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** An invented valid graph and cohort: a binary, a nominal, an ordinal and two continuous variables. */
const GRAPH = "# invented\nage -> bp, smoker\nsmoker -> bp -> stroke\nregion -> smoker\nunmeasured: frailty\nfrailty -> stroke, age\n";
const CSV = (() => {
  const lines = ["age,bp,smoker,stroke,region"];
  let s = 12345;
  const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
  for (let i = 0; i < 80; i++) {
    const age = 40 + Math.floor(rnd() * 40);
    const smoker = rnd() < 0.3 ? "yes" : "no";
    const bp = (110 + age * 0.5 + (smoker === "yes" ? 8 : 0) + rnd() * 10).toFixed(1);
    lines.push([age, bp, smoker, 1 + Math.floor(rnd() * 3), ["north", "south", "east"][Math.floor(rnd() * 3)]].join(","));
  }
  return lines.join("\n") + "\n";
})();

/** Tokens worth inserting: numbers at the edges of the double range, quotes, separators, control characters, hostile names. */
const TOKENS = [
  "1e308", "-1e308", "1.7976931348623157e308", "1e-310", "5e-324", "NaN", "Infinity", "-", "", ".", "NA",
  '"', '""', ",", ";", "\t", "\r", "\r\n", "\n", "\u0000", "\u001b]0;x\u0007", "\u202e", "\uFEFF", "é", "e\u0301",
  "constructor", "__proto__", "toString", "hasOwnProperty", "valueOf", "->", "<->", "{", "}", "[", "]", "unmeasured:", "#",
  "digraph g {", "a -> a", "x".repeat(300),
];

/** One edit of a text: insert, delete, duplicate or replace a span, or repeat, drop or swap lines. */
const edit = fc.oneof(
  fc.record({ kind: fc.constant("insert" as const), at: fc.nat(), token: fc.constantFrom(...TOKENS) }),
  fc.record({ kind: fc.constant("bytes" as const), at: fc.nat(), text: fc.string({ maxLength: 6 }) }),
  fc.record({ kind: fc.constant("delete" as const), at: fc.nat(), length: fc.integer({ min: 1, max: 40 }) }),
  fc.record({ kind: fc.constant("duplicate" as const), at: fc.nat(), length: fc.integer({ min: 1, max: 40 }) }),
  fc.record({ kind: fc.constant("line" as const), at: fc.nat(), op: fc.constantFrom("repeat", "drop", "swap") }),
  fc.record({ kind: fc.constant("cell" as const), at: fc.nat(), field: fc.nat(), token: fc.constantFrom(...TOKENS) }),
);
type Edit = typeof edit extends fc.Arbitrary<infer T> ? T : never;

/** Values that keep a CSV well formed but stress the arithmetic: the edges of the double range, ties, gaps. */
const VALUES = [
  "1e308", "-1e308", "1e200", "-1e200", "1e155", "1e-155", "1e-310", "5e-324", "0", "-0", "9007199254740993",
  "123456789012345678901234567890", "NA", "", "0.1", "1e15", "-1e15",
];

/** Edits of values only (the header and the layout are left alone), so the tests themselves are reached. */
const valueEdit = fc.oneof(
  fc.record({ kind: fc.constant("cell" as const), row: fc.nat(), column: fc.nat(4), value: fc.constantFrom(...VALUES) }),
  fc.record({ kind: fc.constant("scale" as const), column: fc.nat(4), factor: fc.constantFrom("1e200", "1e-200", "1e150", "1e-300", "-1e100") }),
  fc.record({ kind: fc.constant("fill" as const), column: fc.nat(4), value: fc.constantFrom(...VALUES) }),
  fc.record({ kind: fc.constant("offset" as const), column: fc.nat(4), offset: fc.constantFrom("1e15", "1e200", "-1e300", "1e8") }),
);
type ValueEdit = typeof valueEdit extends fc.Arbitrary<infer T> ? T : never;

function applyValues(text: string, edits: readonly ValueEdit[]): string {
  const [header, ...rows] = text.trimEnd().split("\n");
  const cells = rows.map((r) => r.split(","));
  for (const e of edits) {
    if (e.kind === "cell") cells[e.row % cells.length]![e.column] = e.value;
    else
      for (const r of cells) {
        const x = Number(r[e.column]);
        if (e.kind === "fill") r[e.column] = e.value;
        else if (!Number.isFinite(x) || r[e.column] === "") continue;
        else if (e.kind === "scale") r[e.column] = String(x * Number(e.factor));
        else r[e.column] = String(x + Number(e.offset));
      }
  }
  return [header, ...cells.map((r) => r.join(","))].join("\n") + "\n";
}

function apply(text: string, edits: readonly Edit[]): string {
  let t = text;
  for (const e of edits) {
    const at = t.length === 0 ? 0 : e.at % (t.length + 1);
    switch (e.kind) {
      case "insert":
        t = t.slice(0, at) + e.token + t.slice(at);
        break;
      case "bytes":
        t = t.slice(0, at) + e.text + t.slice(at);
        break;
      case "delete":
        t = t.slice(0, at) + t.slice(at + e.length);
        break;
      case "duplicate":
        t = t.slice(0, at) + t.slice(at, at + e.length) + t.slice(at);
        break;
      case "cell": {
        // replace one comma-separated field of one line by a token
        const lines = t.split("\n");
        const i = lines.length === 0 ? 0 : e.at % lines.length;
        const fields = (lines[i] ?? "").split(",");
        fields[e.field % fields.length] = e.token;
        lines[i] = fields.join(",");
        t = lines.join("\n");
        break;
      }
      case "line": {
        const lines = t.split("\n");
        const i = lines.length === 0 ? 0 : e.at % lines.length;
        if (e.op === "repeat") lines.splice(i, 0, lines[i] ?? "");
        else if (e.op === "drop") lines.splice(i, 1);
        else if (i + 1 < lines.length) [lines[i], lines[i + 1]] = [lines[i + 1]!, lines[i]!];
        t = lines.join("\n");
        break;
      }
    }
  }
  return t;
}

const cli = (args: string[]) => runCli(args, { cwd: work });

/** Exit codes the README documents for outcomes that are not bugs. */
const DOCUMENTED = new Set([0, 1, 2, 3, 4]);
/** A JavaScript stack frame line, as printed with an error's stack. */
const STACK = /\n\s+at .+\(?.*:\d+:\d+\)?/;

function check(r: { code: number; stdout: string; stderr: string }, json: boolean, what: string): void {
  expect(r.code, `${what}: exit ${r.code}\n${r.stderr.slice(0, 2000)}`).not.toBe(10);
  expect(DOCUMENTED.has(r.code), `${what}: undocumented exit ${r.code}`).toBe(true);
  expect(STACK.test(r.stderr), `${what}: stack trace\n${r.stderr.slice(0, 2000)}`).toBe(false);
  if (json && r.code === 0) expect(() => JSON.parse(r.stdout), `${what}: invalid JSON`).not.toThrow();
}

describe(`mutation fuzz of graph and CSV inputs (${RUNS} runs each; FUZZ_RUNS to run longer)`, () => {
  it("claims: no internal error, no stack trace, valid JSON on success, for any edit of the graph", async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(edit, { minLength: 1, maxLength: 6 }), fc.boolean(), async (edits, json) => {
        writeFileSync(join(work, "g.txt"), apply(GRAPH, edits));
        const args = ["claims", "g.txt", ...(json ? ["--json"] : [])];
        check(await cli(args), json, `claims of ${JSON.stringify(apply(GRAPH, edits))}`);
      }),
      { numRuns: RUNS },
    );
  });

  it("test: no internal error, no stack trace, valid JSON on success, for any edit of the data (and some of the graph)", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(edit, { minLength: 1, maxLength: 6 }),
        fc.array(edit, { maxLength: 2 }),
        fc.constantFrom("auto", "linear", "rank", "chisq", "regression"),
        async (dataEdits, graphEdits, method) => {
          writeFileSync(join(work, "d.csv"), apply(CSV, dataEdits));
          writeFileSync(join(work, "g2.txt"), apply(GRAPH, graphEdits));
          const args = ["test", "g2.txt", "d.csv", "--json", "--method", method];
          check(await cli(args), true, `test --method ${method} on edits ${JSON.stringify(dataEdits)} / ${JSON.stringify(graphEdits)}`);
        },
      ),
      { numRuns: RUNS },
    );
  }, 300_000);

  it("test: no internal error, no stack trace, valid JSON on success, for any values at the edges of the double range", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(valueEdit, { minLength: 1, maxLength: 4 }),
        fc.constantFrom("auto", "linear", "rank", "chisq", "regression"),
        async (edits, method) => {
          writeFileSync(join(work, "v.csv"), applyValues(CSV, edits));
          writeFileSync(join(work, "g3.txt"), GRAPH);
          const args = ["test", "g3.txt", "v.csv", "--json", "--method", method];
          check(await cli(args), true, `test --method ${method} on value edits ${JSON.stringify(edits)}`);
        },
      ),
      { numRuns: RUNS },
    );
  }, 300_000);
});
