import { readFileSync } from "node:fs";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { UnknownNodeError } from "../../src/errors.js";
import { accumulatePatternRange, buildPatternMoments, patternMomentsFromParts, planPatternMoments } from "../../src/data/buildPatternMoments.js";
import { createTable } from "../../src/data/createTable.js";
import { readTable } from "../../src/data/readTable.js";
import type { Moments } from "../../src/data/Moments.js";
import type { Table } from "../../src/data/Table.js";
import { scaledCovarianceOf } from "../../src/stats/scaledCovariance.js";
import { flexibleBasis } from "../../src/stats/flexibleBasis.js";
import { mapColumnValues } from "../helpers/transformTable.js";

// pandas dropna().mean() / cov(ddof=1), written by test/fixtures/data/make_moments_reference.py (committed fixture)
interface Case { variables: string[]; useRanks: boolean; n: number; design: string[]; means: number[]; cov: number[] }
const reference = JSON.parse(readFileSync(new URL("../fixtures/data/moments-reference.json", import.meta.url), "utf8")) as {
  cases: Case[];
};
const input = new Uint8Array(readFileSync(new URL("../fixtures/data/moments-input.csv", import.meta.url)));
const ALL = ["x1", "x2", "x3", "x4", "b", "ord", "region"];

/** Relative error of covariances on the scale of their variables; of means on the scale of mean and sd. */
function expectClose(m: Moments, means: ArrayLike<number>, cov: ArrayLike<number>, tol: number): void {
  const d = m.design.length;
  for (let a = 0; a < d; a++) {
    const sd = Math.sqrt(cov[a * d + a]!);
    expect(Math.abs(m.means[a]! - means[a]!)).toBeLessThanOrEqual(tol * Math.max(Math.abs(means[a]!), sd));
    for (let b = 0; b < d; b++) {
      const scale = Math.sqrt(cov[a * d + a]! * cov[b * d + b]!);
      expect(Math.abs(m.cov[a * d + b]! - cov[a * d + b]!)).toBeLessThanOrEqual(tol * scale);
    }
  }
}

/** Two-pass complete-case moments straight from the rows (the definition). */
function naiveMoments(t: Table, vars: string[]): { n: number; means: number[]; cov: number[] } {
  const cols: Float64Array[] = [];
  for (const v of vars) {
    const c = t.column(v)!;
    if (c.type === "nominal") {
      for (let l = 1; l < c.levels!.length; l++) cols.push(Float64Array.from(c.codes!, (k) => (k < 0 ? NaN : k === l ? 1 : 0)));
    } else cols.push(c.values);
  }
  const rows: number[] = [];
  for (let i = 0; i < t.rows; i++) if (vars.every((v) => !Number.isNaN(t.column(v)!.values[i]!))) rows.push(i);
  const n = rows.length;
  const means = cols.map((c) => rows.reduce((s, i) => s + c[i]!, 0) / n);
  const d = cols.length;
  const cov: number[] = [];
  for (let a = 0; a < d; a++)
    for (let b = 0; b < d; b++) cov.push(rows.reduce((s, i) => s + (cols[a]![i]! - means[a]!) * (cols[b]![i]! - means[b]!), 0) / (n - 1));
  return { n, means, cov };
}

describe("buildPatternMoments", () => {
  it("buildPatternMoments(...).momentsFor(vars) matches pandas complete-case cov within 1e-9 (committed pandas fixture)", async () => {
    const table = await readTable(input, { file: "moments-input.csv" });
    expect(table.column("region")!.type).toBe("nominal");
    expect(table.column("ord")!.type).toBe("ordinal");
    for (const useRanks of [false, true]) {
      const pm = buildPatternMoments(table, { variables: ALL, useRanks });
      for (const c of reference.cases.filter((k) => k.useRanks === useRanks)) {
        const m = pm.momentsFor(c.variables);
        expect(m.n).toBe(c.n);
        expect(m.design.map((x) => x.name)).toEqual(c.design);
        expectClose(m, c.means, c.cov, 1e-9);
      }
    }
  });

  it("buildPatternMoments counts distinct missing patterns and complete rows as the rows define them", async () => {
    const table = await readTable(input);
    const pm = buildPatternMoments(table, { variables: ALL });
    const keys = new Set<string>();
    let complete = 0;
    for (let i = 0; i < table.rows; i++) {
      const key = ALL.map((v) => (Number.isNaN(table.column(v)!.values[i]!) ? "0" : "1")).join("");
      keys.add(key);
      if (!key.includes("0")) complete++;
    }
    expect(pm.patterns).toBe(keys.size);
    expect(pm.completeRows).toBe(complete);
    expect(pm.patterns).toBeGreaterThan(5);
  });

  it("momentsFor(vars) is the same whether built over vars alone or over a superset (the pattern sum theorem)", async () => {
    const table = await readTable(input);
    const big = buildPatternMoments(table, { variables: ALL });
    for (const vars of [["x2", "region"], ["x1", "x3", "b"], ["ord"]]) {
      const small = buildPatternMoments(table, { variables: vars }).momentsFor(vars);
      const m = big.momentsFor(vars);
      expect(m.n).toBe(small.n);
      expectClose(m, small.means, small.cov, 1e-12);
    }
  });

  it("buildPatternMoments with rowFilter equals building on the filtered rows only", async () => {
    const table = await readTable(input);
    const filter = new Uint8Array(table.rows).map((_, i) => (i % 3 === 0 ? 0 : 1));
    const m = buildPatternMoments(table, { variables: ALL, rowFilter: filter }).momentsFor(["x1", "region", "x4"]);
    const data: Record<string, (number | string | null)[]> = {};
    for (const v of ["x1", "region", "x4"]) {
      const c = table.column(v)!;
      data[v] = [];
      for (let i = 0; i < table.rows; i++) {
        if (!filter[i]) continue;
        data[v]!.push(c.codes ? (c.codes[i]! < 0 ? null : c.levels![c.codes[i]!]!) : c.values[i]!);
      }
    }
    const sub = createTable(data, { types: { region: "nominal" } });
    const ref = naiveMoments(sub, ["x1", "region", "x4"]);
    expect(m.n).toBe(ref.n);
    expectClose(m, ref.means, ref.cov, 1e-9);
  });

  it("buildPatternMoments answers from the rows when the pattern budget is exceeded, with the same moments", async () => {
    const table = await readTable(input);
    const grouped = buildPatternMoments(table, { variables: ALL });
    const rowwise = buildPatternMoments(table, { variables: ALL, maxPatternBytes: 0 });
    expect(rowwise.patterns).toBe(grouped.patterns);
    for (const vars of [ALL, ["region", "x2"]]) {
      const a = grouped.momentsFor(vars);
      const b = rowwise.momentsFor(vars);
      expect(b.n).toBe(a.n);
      expectClose(b, a.means, a.cov, 1e-12);
    }
  });

  it("buildPatternMoments gives the same moments from smaller staging tiles and from the sorted-rows path", async () => {
    const table = await readTable(input);
    const staged = buildPatternMoments(table, { variables: ALL });
    // 48 KiB shrinks the staging tiles from 256 to 64 rows on this file (measured); 0 forces the pattern sort instead
    for (const maxStagingBytes of [48 * 1024, 0]) {
      const other = buildPatternMoments(table, { variables: ALL, maxStagingBytes });
      expect(other.patterns).toBe(staged.patterns);
      for (const vars of [ALL, ["region", "x2"], ["ord", "b", "x4"]]) {
        const a = staged.momentsFor(vars);
        const b = other.momentsFor(vars);
        expect(b.n).toBe(a.n);
        expectClose(b, a.means, a.cov, 1e-12);
      }
    }
  });

  it("patternMomentsFromParts over disjoint row ranges equals the one-part build (staged and sorted paths)", async () => {
    const table = await readTable(input);
    for (const maxStagingBytes of [undefined, 0]) {
      const options = { variables: ALL, ...(maxStagingBytes === undefined ? {} : { maxStagingBytes }) };
      const whole = buildPatternMoments(table, options);
      const plan = planPatternMoments(table, options);
      const pass = plan.pass!;
      const cuts = [0, 1, 1, Math.floor(plan.rows / 3), plan.rows - 2, plan.rows];
      const parts = cuts.slice(1).map((to, i) => accumulatePatternRange(pass, cuts[i]!, to));
      const merged = patternMomentsFromParts(plan, parts);
      expect(merged.patterns).toBe(whole.patterns);
      expect(merged.completeRows).toBe(whole.completeRows);
      expect(merged.patternList()).toEqual(whole.patternList());
      for (const vars of [ALL, ["region", "x2"], ["ord", "b", "x4"]]) {
        const a = whole.momentsFor(vars);
        const b = merged.momentsFor(vars);
        expect(b.n).toBe(a.n);
        expectClose(b, a.means, a.cov, 1e-12);
      }
      // an empty range adds nothing: its sums are all zero
      expect(parts[1]!.sums.every((s) => s.every((v) => v === 0))).toBe(true);
    }
    const plan = planPatternMoments(table, { variables: ALL });
    expect(() => accumulatePatternRange(plan.pass!, 5, 4)).toThrow(RangeError);
    expect(() => accumulatePatternRange(plan.pass!, 0, plan.rows + 1)).toThrow(/not within the/);
    expect(() => patternMomentsFromParts(plan, [])).toThrow(/at least one part/);
    // a plan without a pass (pattern budget exceeded) needs no parts
    const ungrouped = planPatternMoments(table, { variables: ALL, maxPatternBytes: 0 });
    expect(ungrouped.pass).toBeUndefined();
    expect(patternMomentsFromParts(ungrouped, []).momentsFor(["x1"]).n).toBe(buildPatternMoments(table, { variables: ALL }).momentsFor(["x1"]).n);
  });

  it("buildPatternMoments gives the same moments with short staging tiles for rare patterns as from the sorted rows", () => {
    // 56 variables, 20,000 rows: 90% of rows miss one variable (56 patterns of ~321 rows, each under 1/16
    // of the rows), 10% are complete. Full tiles would take 57 · 256 · 56 · 8 B ≈ 6.5 MB > 4 MiB, so the
    // rare patterns get 32-row tiles and the complete pattern full ones (see accumulateByPattern).
    const k = 56;
    const n = 20000;
    let s = 99;
    const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
    const data: Record<string, (number | null)[]> = {};
    for (let j = 0; j < k; j++) data[`v${j}`] = [];
    for (let i = 0; i < n; i++) {
      const gone = i % 10 === 0 ? -1 : i % k;
      const common = rnd();
      for (let j = 0; j < k; j++) data[`v${j}`]!.push(j === gone ? null : 100 * j + common + rnd());
    }
    const t = createTable(data);
    const vars = Object.keys(data);
    const staged = buildPatternMoments(t, { variables: vars });
    const sorted = buildPatternMoments(t, { variables: vars, maxStagingBytes: 0 });
    expect(staged.patterns).toBe(k + 1);
    expect(staged.completeRows).toBe(n / 10);
    for (const sub of [vars, ["v0", "v1"], ["v55", "v3", "v20"]]) {
      const a = sorted.momentsFor(sub);
      const b = staged.momentsFor(sub);
      expect(b.n).toBe(a.n);
      expectClose(b, a.means, a.cov, 1e-12);
    }
    const ref = naiveMoments(t, ["v55", "v3", "v20"]); // the two-pass definition
    expectClose(staged.momentsFor(["v55", "v3", "v20"]), ref.means, ref.cov, 1e-9);
  });

  it("buildPatternMoments gives bit-identical moments with the SIMD kernel and with scalar code (simd: false)", async () => {
    const table = await readTable(input);
    for (const variables of [ALL, ["x1", "x2", "x3"]]) {
      const a = buildPatternMoments(table, { variables });
      const b = buildPatternMoments(table, { variables, simd: false });
      for (const vars of [variables, variables.slice(0, 2)]) {
        const ma = a.momentsFor(vars);
        const mb = b.momentsFor(vars);
        expect(mb.n).toBe(ma.n);
        expect([...mb.cov].every((v, i) => Object.is(v, ma.cov[i]))).toBe(true);
        expect([...mb.means].every((v, i) => Object.is(v, ma.means[i]))).toBe(true);
      }
    }
  });

  it("buildPatternMoments keeps patterns apart when more than 31 variables are missing somewhere (two key words)", () => {
    const data: Record<string, (number | null)[]> = {};
    for (let j = 0; j < 45; j++) data[`v${j}`] = Array.from({ length: 90 }, (_, i) => (i % 45 === j ? null : i * (j + 1) + (i % 5) * (j % 3)));
    const t = createTable(data);
    const vars = Object.keys(data);
    const pm = buildPatternMoments(t, { variables: vars });
    expect(pm.patterns).toBe(45);
    for (const sub of [["v0", "v44", "v31"], ["v32", "v40"], vars]) {
      const ref = naiveMoments(t, sub);
      const m = pm.momentsFor(sub);
      expect(m.n).toBe(ref.n);
      if (ref.n >= 2) expectClose(m, ref.means, ref.cov, 1e-9);
    }
  });

  it("momentsFor matches the two-pass definition on random tables with missing values and odd/even design sizes", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 7 }),
        fc.integer({ min: 3, max: 60 }),
        fc.integer({ min: 0, max: 1000 }),
        (k, n, seed) => {
          let s = seed + 1;
          const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
          const data: Record<string, (number | null)[]> = {};
          for (let j = 0; j < k; j++) data[`v${j}`] = Array.from({ length: n }, () => (rnd() < 0.15 ? null : 1e3 * j + rnd() * 10));
          const t = createTable(data);
          const vars = Object.keys(data);
          const m = buildPatternMoments(t, { variables: vars }).momentsFor(vars);
          const ref = naiveMoments(t, vars);
          expect(m.n).toBe(ref.n);
          if (ref.n >= 2) expectClose(m, ref.means, ref.cov, 1e-9);
          else expect(m.cov.every((v) => Number.isNaN(v))).toBe(true);
        },
      ),
      { numRuns: 60, seed: 5 },
    );
  });

  it("buildPatternMoments handles empty tables, all-missing variables and unknown names", () => {
    const t = createTable({ a: [1, 2, 3], b: [null, null, null], g: ["x", "y", "z"] });
    const pm = buildPatternMoments(t, { variables: ["a", "b", "g"] });
    const none = pm.momentsFor(["a", "b"]);
    expect(none.n).toBe(0);
    expect(Number.isNaN(none.means[0]!)).toBe(true);
    const ag = pm.momentsFor(["g", "a"]);
    expect(ag.design).toEqual([
      { name: "g=y", source: "g", kind: "indicator", code: 1 },
      { name: "g=z", source: "g", kind: "indicator", code: 2 },
      { name: "a", source: "a", kind: "score" },
    ]);
    expect(ag.n).toBe(3);
    expect(ag.means[0]).toBeCloseTo(1 / 3, 15); // share of "y", by hand
    expect(ag.cov[0 * 3 + 1]).toBeCloseTo(-1 / 6, 15); // cov of two exclusive indicators, p = 1/3 each: -n/(n-1)·p², by hand
    expect(pm.momentsFor([]).n).toBe(3);
    expect(() => pm.momentsFor(["zzz"])).toThrow(UnknownNodeError);
    expect(() => buildPatternMoments(t, { variables: ["nope"] })).toThrow(UnknownNodeError);
    const empty = createTable({ a: [], b: [] });
    const e = buildPatternMoments(empty, { variables: ["a", "b"] });
    expect(e.patterns).toBe(0);
    expect(e.momentsFor(["a"]).n).toBe(0);
  });

  it("buildPatternMoments keeps patterns over more than 52 variables apart", () => {
    const data: Record<string, (number | null)[]> = {};
    for (let j = 0; j < 60; j++) data[`v${j}`] = Array.from({ length: 40 }, (_, i) => (i % 60 === j || (j === 59 && i === 1) ? null : i * (j + 1) + (i % 7)));
    const t = createTable(data);
    const vars = Object.keys(data);
    const pm = buildPatternMoments(t, { variables: vars });
    const sub = ["v0", "v59", "v30"];
    const ref = naiveMoments(t, sub);
    const m = pm.momentsFor(sub);
    expect(m.n).toBe(ref.n);
    expectClose(m, ref.means, ref.cov, 1e-9);
  });
});

describe("buildPatternMoments at the ends of the double range", () => {
  const CONT = ["x1", "x2", "x3", "x4"];

  it("columns scaled by 2^k give the unscaled moments times 2^k (means) and 2^(k_a + k_b) (covariances) bit for bit where those are normal, and the same scaled twin (IEEE 754: exact powers of two)", async () => {
    const table = await readTable(input, { file: "moments-input.csv" });
    const base = buildPatternMoments(table, { variables: ALL }).momentsFor(ALL);
    const baseTwin = scaledCovarianceOf(base.cov)!;
    for (const k of [-900, -300, 300, 900, 1000]) {
      const scaled = buildPatternMoments(mapColumnValues(table, ["x1", "x3"], (v) => v * 2 ** k), { variables: ALL }).momentsFor(ALL);
      const twin = scaledCovarianceOf(scaled.cov)!;
      expect(Array.from(twin.cov), `k=${k}`).toEqual(Array.from(baseTwin.cov));
      expect(Array.from(twin.means), `k=${k}`).toEqual(Array.from(baseTwin.means));
      const d = base.design.length;
      const kOf = (a: number) => (["x1", "x3"].includes(base.design[a]!.source) ? k : 0);
      for (let a = 0; a < d; a++) {
        const mean = base.means[a]! * 2 ** kOf(a);
        if (Math.abs(mean) >= 2 ** -1022 && Number.isFinite(mean)) expect(scaled.means[a]).toBe(mean);
        for (let b = 0; b < d; b++) {
          const want = base.cov[a * d + b]! * 2 ** kOf(a) * 2 ** kOf(b);
          if (Number.isFinite(want) && Math.abs(want) >= 2 ** -1022) expect(scaled.cov[a * d + b], `k=${k} (${a}, ${b})`).toBe(want);
        }
      }
      // where the unscaled covariance leaves the double range the returned one does too (x1's variance near 1e5·2^1800), never NaN
      expect(scaled.cov.every((v) => !Number.isNaN(v))).toBe(true);
    }
  });

  it("one cell of 1e155, 1e200, −1e308 or 1.7e308 among ordinary values: the scaled twin matches the two-pass definition on the scaled values to 1e-9, nothing is NaN (regression: squares overflowed to NaN)", async () => {
    const table = await readTable(input, { file: "moments-input.csv" });
    const at = table.column("x2")!.values.findIndex((v) => !Number.isNaN(v));
    for (const extreme of [1e155, 1e200, -1e308, 1.7e308]) {
      const t = mapColumnValues(table, ["x2"], (v, i) => (i === at ? extreme : v));
      const m = buildPatternMoments(t, { variables: CONT }).momentsFor(CONT);
      const twin = scaledCovarianceOf(m.cov)!;
      expect(m.means.every(Number.isFinite), `${extreme}`).toBe(true);
      expect(m.cov.every((v) => !Number.isNaN(v)), `${extreme}`).toBe(true);
      // the definition on the values times the scales the moments used
      let scaledTable = t;
      CONT.forEach((v, j) => (scaledTable = mapColumnValues(scaledTable, [v], (x) => x * 2 ** twin.exponent[j]!)));
      const ref = naiveMoments(scaledTable, CONT);
      const x2 = m.design.findIndex((d) => d.source === "x2");
      const d = m.design.length;
      expect(twin.exponent[x2]).toBe(-Math.floor(Math.log2(Math.abs(extreme))) - 1); // math.frexp exponent of the extreme value
      expect(m.n).toBe(ref.n);
      expectClose({ ...m, means: twin.means, cov: twin.cov }, ref.means, ref.cov, 1e-9);
      // the same scaled moments from the rows (pattern budget exceeded) and from the sorted rows
      // (staging budget exceeded), each against the definition at the scales it used (a path may
      // choose other powers of two for columns far from the extreme: the rows path takes them from
      // the request's rows, the pattern path shares one per column among patterns of like range)
      for (const opts of [{ maxPatternBytes: 0 }, { maxStagingBytes: 0 }]) {
        const other = scaledCovarianceOf(buildPatternMoments(t, { variables: CONT, ...opts }).momentsFor(CONT).cov)!;
        expect(other.exponent[x2]).toBe(twin.exponent[x2]);
        let otherScaled = t;
        CONT.forEach((v, j) => (otherScaled = mapColumnValues(otherScaled, [v], (x) => x * 2 ** other.exponent[j]!)));
        const otherRef = naiveMoments(otherScaled, CONT);
        expectClose({ ...m, means: other.means, cov: other.cov }, otherRef.means, otherRef.cov, 1e-9);
      }
      expect(twin.cov[x2 * d + x2]! > 0).toBe(true);
    }
  });

  it("distinct values near 1e-310 (subnormal): the variance underflows to 0 unscaled, and the scaled twin is that of the same values times 2^1023, exactly (regression: reported as constant)", async () => {
    const table = await readTable(input, { file: "moments-input.csv" });
    const tiny = mapColumnValues(table, ["x2"], (v) => v * 2 ** -1030);
    const normal = mapColumnValues(tiny, ["x2"], (v) => v * 2 ** 1023); // exact: scaling a subnormal up
    const m = buildPatternMoments(tiny, { variables: ["x2", "x1"] }).momentsFor(["x2", "x1"]);
    const ref = buildPatternMoments(normal, { variables: ["x2", "x1"] }).momentsFor(["x2", "x1"]);
    expect(m.cov[0]).toBe(0); // the variance itself is below the smallest double
    const twin = scaledCovarianceOf(m.cov)!;
    expect(twin.exponent[0]).toBe(1023); // the clamp: the tiny column enters as its values times 2^1023, which is `normal`
    expect(twin.cov[0]).toBe(ref.cov[0]);
    expect(twin.means[0]).toBe(ref.means[0]);
    expect(twin.cov[0]).toBeGreaterThan(0);
    // the correlation with x1 is that of the normal-range copy
    const corr = (c: ArrayLike<number>) => c[1]! / Math.sqrt(c[0]! * c[3]!);
    expect(corr(twin.cov)).toBe(corr(ref.cov));
  });

  it("basis columns of a variable with a value of 1e200 have finite scaled moments (regression: cubic spline terms overflowed)", async () => {
    const table = await readTable(input, { file: "moments-input.csv" });
    const t = mapColumnValues(table, ["x2"], (v, i) => (i === 3 ? 1e200 : v));
    const vals = Float64Array.from(t.column("x2")!.values).filter((v) => !Number.isNaN(v)).sort();
    const basis = new Map([["x2", flexibleBasis(vals, 3)]]);
    for (const simd of [true, false]) {
      const pm = buildPatternMoments(t, { variables: ["x2", "x1"], expansions: { basis }, simd });
      const idx = pm.columnsOf("x2").map((c) => c.index);
      expect(idx.length).toBeGreaterThan(4);
      const twin = scaledCovarianceOf(pm.momentsForColumns(idx).cov)!;
      expect(twin.cov.every(Number.isFinite)).toBe(true);
      expect(twin.means.every(Number.isFinite)).toBe(true);
    }
  });
});
