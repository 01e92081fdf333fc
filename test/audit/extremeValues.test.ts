/**
 * The audit on extreme numbers, with every test method: one cell of magnitude 1e155 or more (whose
 * square overflows), −1e308 and 1.7e308 (whose differences overflow), whole columns near 1e200,
 * distinct values near 1e-310 (subnormal: their squares underflow) and mixtures of these with
 * ordinary values. Every claim must be tested with finite numbers or be untestable with a reason,
 * never NaN, never an internal error; and every result must be invariant to multiplying a column
 * by a power of two, which changes no digit of any scale-free statistic (IEEE 754: multiplying by
 * 2^k is exact in the normal range).
 */
import { describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import { columnBasis, runGcmOn, varianceSample } from "../../src/audit/methods/gcm.js";
import { buildPatternMoments } from "../../src/data/buildPatternMoments.js";
import { createTable } from "../../src/data/createTable.js";
import type { Table } from "../../src/data/Table.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { createRng } from "../../src/stats/rng.js";
import type { AuditResult, AuditSettings } from "../../src/audit/types.js";
import { mapColumnValues } from "../helpers/transformTable.js";

const METHODS: AuditSettings["method"][] = ["auto", "linear", "rank", "chisq", "regression"];

/**
 * Invented data: z continuous (skewed), x and y continuous in z, b binary in z, o ordinal (scores
 * 1–4) and g nominal (3 text levels) in b, w continuous independent; 5% of x missing.
 */
function cohort(n: number, seed: number): Table {
  const rng = createRng(seed, "extreme values test data");
  const normal = () => {
    const u = Math.max(rng.nextFloat(), 1e-12);
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.nextFloat());
  };
  const cols: Record<string, (number | string | null)[]> = { z: [], x: [], y: [], b: [], o: [], g: [], w: [] };
  for (let i = 0; i < n; i++) {
    const z = Math.exp(normal() / 2);
    const b = rng.nextFloat() < 1 / (1 + Math.exp(1 - z)) ? 1 : 0;
    cols.z!.push(z);
    cols.x!.push(rng.nextFloat() < 0.05 ? null : z + normal());
    cols.y!.push(z * z + normal());
    cols.b!.push(b);
    cols.o!.push(1 + Math.min(3, Math.floor(rng.nextFloat() * 3 + b)));
    cols.g!.push(["north", "south", "east"][Math.floor(rng.nextFloat() * 3)]!);
    cols.w!.push(normal());
  }
  return createTable(cols, { types: { z: "continuous", x: "continuous", y: "continuous", b: "binary", o: "ordinal", g: "nominal", w: "continuous" } });
}

const graph = createGraph({ arrows: [["z", "x"], ["z", "y"], ["z", "b"], ["b", "o"], ["g", "o"]], nodes: ["w"] });
const base = cohort(400, 1);
const baseResult = runAudit(graph, base);

/** Every claim tested with finite numbers, or untestable with a reason in words; the counts add up. */
function expectSound(r: AuditResult, where: string): void {
  for (const c of r.claims) {
    const at = `${where}: ${c.x} ⫫ ${c.y} | ${c.given.join(", ")} (${c.test})`;
    for (const v of [c.statistic, c.df, c.effect, c.ci[0], c.ci[1], c.log_p]) expect(Number.isFinite(v), at).toBe(true);
    expect(c.p > 0 && c.p <= 1, at).toBe(true);
    expect(c.p_adjusted >= c.p && c.p_adjusted <= 1, at).toBe(true);
    // no NaN, and no value that JSON writes as null (NaN, ±Infinity)
    expect(JSON.stringify(c), at).not.toMatch(/NaN|[:,[]null[,\]}]/u);
  }
  for (const u of r.untestable) {
    expect(u.reason.length, `${where}: ${u.x} ⫫ ${u.y}`).toBeGreaterThan(10);
    expect(u.reason, `${where}: ${u.x} ⫫ ${u.y}`).not.toMatch(/NaN|non-finite|Infinity/u);
  }
  expect(r.claims.length + r.untestable.length, where).toBe(baseResult.claims.length + baseResult.untestable.length);
  expect(Number.isFinite(r.global.statistic) && r.global.p >= 0 && r.global.p <= 1, where).toBe(true);
}

/** The first row where the column is observed, after `from`. */
function observedRow(t: Table, name: string, from = 0): number {
  const v = t.column(name)!.values;
  for (let i = from; i < t.rows; i++) if (!Number.isNaN(v[i]!)) return i;
  throw new Error(`no observed row of ${name}`);
}

describe("runAudit on extreme numbers, every --method", () => {
  it("one cell of 1e155, 1e200, −1e308 or 1.7e308 in a continuous column: every claim tested with finite numbers or untestable with a reason (regression: exit 10, NaN)", () => {
    for (const extreme of [1e155, 1e200, -1e308, 1.7e308]) {
      for (const col of ["x", "z"]) {
        const at = observedRow(base, col, 17);
        const t = mapColumnValues(base, [col], (v, i) => (i === at ? extreme : v));
        for (const method of METHODS) {
          const r = runAudit(graph, t, { settings: { method } });
          expectSound(r, `${col}[${at}] = ${extreme}, --method ${method}`);
          // the variables with an extreme cell are tested, not set aside
          expect(r.claims.some((c) => c.x === col || c.y === col), `${col} = ${extreme}, --method ${method}`).toBe(true);
        }
      }
    }
  });

  it("mixtures: extremes in several columns, a whole column near 1e200, an ordinal scored up to 1e200 and a column of distinct values near 1e-310, with --permutations too", () => {
    const ax = observedRow(base, "x", 3);
    let t = mapColumnValues(base, ["x"], (v, i) => (i === ax ? 1.7e308 : i === ax + 40 ? -1e308 : v));
    t = mapColumnValues(t, ["y"], (v, i) => (i === 5 ? -1e308 : v * 1e200));
    t = mapColumnValues(t, ["o"], (v) => (v === 4 ? 1e200 : v));
    t = mapColumnValues(t, ["w"], (v) => v * 1e-310);
    for (const method of METHODS) {
      expectSound(runAudit(graph, t, { settings: { method } }), `mixture, --method ${method}`);
      expectSound(runAudit(graph, t, { settings: { method, permutations: 200 } }), `mixture, --method ${method} --permutations 200`);
    }
  });

  it("distinct values near 1e-310 are tested by every method, never reported constant (regression: 'constant among the complete rows')", () => {
    const t = mapColumnValues(base, ["w", "x"], (v) => v * 1e-310);
    for (const method of METHODS) {
      const r = runAudit(graph, t, { settings: { method } });
      expectSound(r, `subnormal, --method ${method}`);
      expect(r.untestable.filter((u) => /constant/u.test(u.reason)), `--method ${method}`).toEqual([]);
      expect(r.claims.filter((c) => c.x === "w" || c.y === "w").length, `--method ${method}`).toBe(6); // w is isolated: a claim with each other node
    }
  });
});

describe("an extreme value on a row a claim leaves out does not change the claim", () => {
  /** x ⫫ y | z on its complete rows, with z's cell on a row where x is missing set to `v`. */
  function claimWith(t: Table, v: number | undefined, method: AuditSettings["method"]) {
    const missingX = t.column("x")!.values.findIndex((x) => Number.isNaN(x));
    const u = v === undefined ? t : mapColumnValues(t, ["z"], (z, i) => (i === missingX ? v : z));
    const r = runAudit(createGraph({ arrows: [["z", "x"], ["z", "y"]] }), u, { settings: { method } });
    const c = r.claims.find((k) => k.x === "x" && k.y === "y");
    if (!c) throw new Error(`x ⫫ y | z untestable: ${JSON.stringify(r.untestable)}`);
    return c;
  }

  it("z = 1e20, 1e200 or −1e308 where x is missing: linear and regression give the p-value of the ordinary cell (to 1e-9), and the default and rank tests their linear check's, never a contradiction (regression: the column's mean or scale was set by that cell, the claim's rows lost every digit, and the true claim was contradicted with p < 1e-10)", () => {
    for (const [t, label] of [[base, "400 rows (row path)"], [cohort(25_000, 5), "25,000 rows (moment path)"]] as const) {
      const ref = { linear: claimWith(t, undefined, "linear"), regression: claimWith(t, undefined, "regression") };
      for (const v of [1e20, 1e200, -1e308]) {
        for (const method of ["linear", "regression"] as const) {
          const c = claimWith(t, v, method);
          expect(Math.abs(c.p - ref[method].p), `${label}, z = ${v}, --method ${method}`).toBeLessThanOrEqual(1e-9 * ref[method].p);
        }
        for (const method of ["auto", "rank"] as const) {
          const c = claimWith(t, v, method);
          const lin = (c.details as { linear_adjustment?: { p: number } }).linear_adjustment!;
          if (method === "auto") expect(Math.abs(lin.p - ref.linear.p), `${label}, z = ${v}: linear check`).toBeLessThanOrEqual(1e-9 * ref.linear.p); // the partial-correlation test on the same rows
          expect(c.p, `${label}, z = ${v}, --method ${method}`).toBeGreaterThan(1e-3);
          expect(c.verdict).toBe("consistent");
        }
      }
    }
  });
});

describe("linear-by-linear on ordinal scores at the ends of the double range", () => {
  it("two ordinal variables scored up to 1e200 and from −1e308 to 1e-310: tested with finite numbers, and details hold no value JSON writes as null (regression: T, E, V of ±Infinity)", () => {
    const rng = createRng(4, "ordinal extremes");
    const rows = 300;
    const g = Array.from({ length: rows }, () => ["a", "b"][rng.nextInt(2)]!);
    const o1 = g.map((s) => [1, 2, 3, 1e200][Math.min(3, rng.nextInt(3) + (s === "b" ? 1 : 0))]!);
    const o2 = g.map((s) => [-1e308, 0, 1e-310, 5][Math.min(3, rng.nextInt(3) + (s === "b" ? 1 : 0))]!);
    const t = createTable({ o1, o2, g }, { types: { o1: "ordinal", o2: "ordinal", g: "nominal" } });
    const gr = createGraph({ arrows: [["g", "o1"], ["g", "o2"]] });
    for (const permutations of [undefined, 300]) {
      const r = runAudit(gr, t, { settings: { ...(permutations ? { permutations } : {}) } });
      expect(r.claims.map((c) => c.test)).toEqual(["linear-by-linear"]);
      const c = r.claims[0]!;
      for (const v of [c.statistic, c.p, c.effect, ...c.ci]) expect(Number.isFinite(v)).toBe(true);
      expect(JSON.stringify(c)).not.toMatch(/NaN|[:,[]null[,\]}]/u);
      // a power of two leaves the statistic as it is (IEEE 754: exact scaling)
      const scaled = runAudit(gr, mapColumnValues(t, ["o1"], (v) => v * 2 ** -600), { settings: { ...(permutations ? { permutations } : {}) } });
      expect(scaled.claims[0]!.p).toBe(c.p);
    }
  });
});

describe("runAudit results are invariant to multiplying a column by a power of two", () => {
  /** p-values by claim, in a fixed order. */
  const pOf = (r: AuditResult) => new Map(r.claims.map((c) => [`${c.x}|${c.y}|${c.given.join(",")}`, c.p]));

  it("x, z (continuous) and o (ordinal scores) times 2^k, k = ±300, ±900, 1000: the same p-values to 1e-12 with every method, though raw squares overflow or underflow (IEEE 754: exact scaling)", () => {
    for (const method of METHODS) {
      const ref = pOf(runAudit(graph, base, { settings: { method } }));
      for (const k of [-900, -300, 300, 900, 1000]) {
        const t = mapColumnValues(base, ["x", "z", "o"], (v) => v * 2 ** k);
        const got = pOf(runAudit(graph, t, { settings: { method } }));
        expect([...got.keys()], `--method ${method}, k=${k}`).toEqual([...ref.keys()]);
        for (const [key, p] of ref) expect(Math.abs(got.get(key)! - p), `--method ${method}, k=${k}: ${key}`).toBeLessThanOrEqual(1e-12 * p);
      }
    }
  });

  it("on the moment path (25,000 rows): the same p-values for x and z times 2^±900, and values near 1e-310 are those of their normal-range copy", () => {
    const big = cohort(25_000, 2);
    for (const method of ["auto", "linear", "rank"] as const) {
      const ref = pOf(runAudit(graph, big, { settings: { method } }));
      for (const k of [-900, 900]) {
        const got = pOf(runAudit(graph, mapColumnValues(big, ["x", "z"], (v) => v * 2 ** k), { settings: { method } }));
        for (const [key, p] of ref) expect(Math.abs(got.get(key)! - p), `--method ${method}, k=${k}: ${key}`).toBeLessThanOrEqual(1e-12 * p);
      }
      // w times 2^−1030 is subnormal; scaled back by 2^1030 it is a normal column holding the same numbers (scaling up is exact)
      const tiny = mapColumnValues(big, ["w"], (v) => v * 2 ** -1030);
      const back = mapColumnValues(tiny, ["w"], (v) => v * 2 ** 515 * 2 ** 515); // 2^1030 itself is beyond the double range
      const a = pOf(runAudit(graph, tiny, { settings: { method } }));
      const b = pOf(runAudit(graph, back, { settings: { method } }));
      for (const [key, p] of b) expect(Math.abs(a.get(key)! - p), `--method ${method}, subnormal w: ${key}`).toBeLessThanOrEqual(1e-12 * p);
    }
  });
});

describe("gcm moment path: the variance sample must represent the claim's rows", () => {
  it("a value of 1e10 outside the 20,000-row variance sample sends the claim to its rows (same result as the row path); without it the claim stays on the moments (regression: a true claim contradicted with r = 0.63)", () => {
    const big = cohort(25_000, 3);
    const sample = new Set(varianceSample(big, 1));
    let outside = observedRow(big, "x", 100);
    while (sample.has(outside)) outside = observedRow(big, "x", outside + 1);
    const t = mapColumnValues(big, ["x"], (v, i) => (i === outside ? 1e10 : v));
    for (const [table, path] of [[big, "moments"], [t, "rows"]] as const) {
      const moments = buildPatternMoments(table, { variables: ["x", "y", "z"] });
      const ctx = { table, moments, seed: 1 };
      const claim = { x: "x", y: "y", given: [] as string[] };
      const viaMoments = runGcmOn("moments", "gcm", claim, ctx);
      if (!viaMoments.ok) throw new Error(viaMoments.reason);
      expect(viaMoments.outcome.details?.path).toBe(path);
      if (path === "rows") {
        const viaRows = runGcmOn("rows", "gcm", claim, ctx);
        if (!viaRows.ok) throw new Error(viaRows.reason);
        expect(viaMoments.outcome.p).toBe(viaRows.outcome.p);
      }
    }
  });

  it("a claim sent to its rows keeps at most the basis level the moments hold (the moments' compute budget)", () => {
    const big = cohort(25_000, 3);
    const sample = varianceSample(big, 1);
    const inSample = new Set(sample);
    let outside = observedRow(big, "x", 100);
    while (inSample.has(outside)) outside = observedRow(big, "x", outside + 1);
    const t = mapColumnValues(big, ["x"], (v, i) => (i === outside ? 1e10 : v));
    const basis = new Map([["z", { levels: columnBasis(t.column("z")!, varianceSample(t, 1)).levels.slice(0, 2) }]]);
    const moments = buildPatternMoments(t, { variables: ["x", "y", "z"], expansions: { basis } });
    const res = runGcmOn("moments", "gcm", { x: "x", y: "y", given: ["z"] }, { table: t, moments, seed: 1 });
    if (!res.ok) throw new Error(res.reason);
    const d = res.outcome.details as { path: string; flexibility: { max_level: number } };
    expect(d.path).toBe("rows");
    expect(d.flexibility.max_level).toBe(1); // the rows alone would allow level 5 at 25,000 rows
  });
});
