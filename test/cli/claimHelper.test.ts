/**
 * The helper thread of the audit: claims that read the rows (logistic and multinomial fits,
 * grouped tables) shared with a worker give exactly the result of the one-thread audit.
 * Reference: the one-thread `runAudit` on the same inputs (each claim's result depends only on
 * the data, the claim and the seed); a seeded invented mixed-type cohort.
 */
import { describe, expect, it } from "vitest";
import { claimHelper } from "../../cli/claimHelper.js";
import { helperContext, MomentsUnavailableError, runAudit, runAuditParallel, testClaimMethod, type ClaimHelper } from "../../src/audit/runAudit.js";
import { chooseMethod } from "../../src/audit/methods/index.js";
import type { AuditSettings, Claim } from "../../src/audit/types.js";
import { deriveClaims } from "../../src/graph/deriveClaims.js";
import { DEFAULT_SETTINGS } from "../../src/audit/runAudit.js";
import { pearsonPartial } from "../../src/audit/methods/pearsonPartial.js";
import { regressionLr } from "../../src/audit/methods/regressionLr.js";
import { stratifiedChisq } from "../../src/audit/methods/stratifiedChisq.js";
import { createTable } from "../../src/data/createTable.js";
import { parseGraph } from "../../src/graph/parseGraph.js";
import { createRng } from "../../src/stats/rng.js";

// Invented cohort: c1, c2 continuous; a nominal (3), b binary, e nominal (4), s binary; m nominal (3) caused by a, b and c2; r, t unrelated.
function cohort(n: number) {
  const rng = createRng(31, "helper-thread cohort");
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
  const pick = (labels: string[], score: number) => labels[Math.min(labels.length - 1, Math.max(0, Math.floor((score + 1.5) * labels.length / 3)))]!;
  const cols: Record<string, (number | string | null)[]> = { c1: [], c2: [], a: [], b: [], e: [], s: [], m: [], r: [], t: [] };
  for (let i = 0; i < n; i++) {
    const c1 = normal();
    const c2 = 0.5 * c1 + normal();
    const a = pick(["north", "east", "west"], 0.6 * c1 + normal());
    const b = 0.5 * c1 + normal() > 0 ? 1 : 0;
    const e = pick(["p", "q", "r", "t"], 0.5 * c2 + normal());
    const s = 0.4 * c2 + normal() > 0.3 ? 1 : 0;
    const m = pick(["lo", "mid", "hi"], 0.4 * (a === "north" ? 1 : 0) + 0.5 * b + 0.3 * c2 + normal());
    cols.c1!.push(c1);
    cols.c2!.push(i % 97 === 0 ? null : c2); // some missing values
    cols.a!.push(a);
    cols.b!.push(b);
    cols.e!.push(i % 89 === 0 ? null : e);
    cols.s!.push(s);
    cols.m!.push(m);
    cols.r!.push(pick(["x", "y", "z"], normal())); // r and t: roots with no arrows (a table test)
    cols.t!.push(normal() > 0 ? "yes" : "no");
  }
  return createTable(cols, { types: { a: "nominal", e: "nominal", m: "nominal", b: "binary", s: "binary", r: "nominal", t: "binary" } });
}
const graph = parseGraph("c1 -> c2, a, b\nc2 -> e, s, m\na, b -> m\nr\nt\n").graph;
const table = cohort(4000);
const typesOf = (c: Claim) => ({ x: table.column(c.x)!.type, y: table.column(c.y)!.type, given: c.given.map((g) => table.column(g)!.type) });

describe("runAuditParallel with the worker helper", () => {
  it("the worker alone answers every claim of a job exactly as testClaimMethod on this thread (default tests on the rows; logistic, multinomial, table tests)", async () => {
    const cases: [AuditSettings, string[]][] = [
      [DEFAULT_SETTINGS, ["gcm:rows", "stratified-chisq:"]],
      [{ ...DEFAULT_SETTINGS, method: "regression" }, ["regression-lr:logistic", "regression-lr:multinomial"]],
    ];
    for (const [settings, expected] of cases) {
      const claims = deriveClaims(graph).claims.filter((c) => (chooseMethod(settings.method, typesOf(c)).rowWork?.(c, table) ?? 0) > 0);
      const counter = new Int32Array(new SharedArrayBuffer(8));
      let answered = 0;
      const got = await claimHelper({ table, claims, counter, settings, decisionFloor: 0.05 }, () => answered++);
      expect(got.size).toBe(claims.length);
      expect(answered).toBe(claims.length);
      expect(Atomics.load(counter, 1)).toBe(claims.length);
      const ctx = { ...helperContext(table, settings) };
      const here = claims.map((c) => testClaimMethod(c, ctx, settings));
      expect(claims.map((_, k) => got.get(k))).toEqual(here);
      const kinds = new Set(here.map((r) => (r.ok ? `${r.outcome.test}:${(r.outcome.details as { model?: string; path?: string } | undefined)?.model ?? (r.outcome.details as { path?: string } | undefined)?.path ?? ""}` : "untestable")));
      expect(kinds).toEqual(new Set(expected));
    }
  });

  it("runAuditParallel gives the same result as runAudit (every field of every claim) with the worker helper", async () => {
    const alone = runAudit(graph, table);
    const shared = await runAuditParallel(graph, table, { helper: claimHelper, helperMinWork: 0 });
    expect(shared).toEqual(alone);
  });

  it("runAuditParallel equals runAudit with --listwise (the row filter travels to the worker), forced permutations and another seed", async () => {
    for (const settings of [{ listwise: true }, { permutations: 199, seed: 5 }, { method: "regression" as const, seed: 9 }]) {
      const alone = runAudit(graph, table, { settings });
      const shared = await runAuditParallel(graph, table, { settings, helper: claimHelper, helperMinWork: 0 });
      expect(shared).toEqual(alone);
    }
  });

  it("tests again on the main thread the claims a failed helper took but did not answer", async () => {
    const alone = runAudit(graph, table);
    let took: number[] = [];
    const failing: ClaimHelper = async (job) => {
      const first = Atomics.add(job.counter, 0, 3); // takes three claims and never answers them
      took = [first, first + 1, first + 2].filter((k) => k < job.claims.length);
      return new Map();
    };
    const shared = await runAuditParallel(graph, table, { helper: failing, helperMinWork: 0 });
    expect(took).toEqual([0, 1, 2]);
    expect(shared).toEqual(alone);
  });

  it("an error on the main thread leaves the helper nothing more to take, waits for it, then is reported", async () => {
    let failing = false;
    const c1 = table.column("c1")!;
    const trap = { ...c1, get values() { if (failing) throw new Error("disk gone"); return c1.values; } };
    const trapped = { ...table, columns: table.columns.map((c) => (c.name === "c1" ? trap : c)), column: (n: string) => (n === "c1" ? trap : table.column(n)) };
    let left = -1;
    let queued = 0;
    const slow: ClaimHelper = (job) => {
      failing = true; // the moments, built next on the main thread, now fail
      queued = job.claims.length;
      return new Promise((resolve) => setTimeout(() => { left = Atomics.load(job.counter, 0); resolve(new Map()); }, 20));
    };
    await expect(runAuditParallel(graph, trapped, { helper: slow, helperMinWork: 0 })).rejects.toThrow("disk gone");
    expect(queued).toBeGreaterThan(0);
    expect(left).toBe(queued); // the counter was moved to the end before the helper was awaited
  });

  it("does not start the helper below the work threshold", async () => {
    let started = false;
    const spy: ClaimHelper = async () => { started = true; return new Map(); };
    await runAuditParallel(graph, table, { helper: spy });
    expect(started).toBe(false); // 4,000 rows are far below the default threshold
  });
});

describe("rowWork and the helper's context", () => {
  it("claims with row work never touch the moments; moment-based claims have none and would throw on a helper", () => {
    const ctx = helperContext(table, DEFAULT_SETTINGS);
    const logistic = { x: "a", y: "b", given: ["c1"] };
    expect(regressionLr.rowWork!(logistic, table)).toBeGreaterThan(0);
    expect(regressionLr.run(logistic, ctx).ok).toBe(true);
    const grouped = { x: "a", y: "s", given: ["b"] };
    expect(stratifiedChisq.rowWork!(grouped, table)).toBeGreaterThan(0);
    expect(stratifiedChisq.run(grouped, ctx).ok).toBe(true);
    const linear = { x: "a", y: "c2", given: ["c1"] };
    expect(regressionLr.rowWork!(linear, table)).toBe(0);
    expect(() => regressionLr.run(linear, ctx)).toThrow(MomentsUnavailableError);
    expect(pearsonPartial.rowWork).toBeUndefined();
  });
});
