/**
 * The generalised covariance measure test (`gcm`, `gcm-rank`) against an independent numpy/scipy
 * implementation: scripts/gcm_reference.py wrote the data (test/fixtures/gcm/shapes.csv,
 * small.csv) and every reference outcome (test/fixtures/gcm/claims.json) — least squares by
 * numpy.linalg.lstsq on the row matrix, knots by numpy.quantile, mid-ranks by
 * scipy.stats.rankdata, tails by scipy.stats (mpmath below 1e-300), intervals by
 * scipy.stats.t.ppf, numpy.var of the correlation's influence values and scipy.optimize.brentq
 * (one residual product), and scipy.optimize.brentq on scipy.stats.ncx2.sf (several).
 *
 * Precision. The project fits the nested adjustment from covariances (a Cholesky factor of the
 * columns' covariance, the normal equations), whose error grows like u·κ² for the column-scaled
 * condition number κ of the adjustment (Golub & Van Loan 2013, Matrix Computations, 4th ed.,
 * §5.3.7–5.3.8; u = 2⁻⁵³), while the reference's lstsq error grows like u·κ. The fixture records κ
 * of every claim's adjustment at the chosen level, and each comparison allows
 * tol = max(1e-8, u·κ²): 1e-8 for all claims up to κ ≈ 1e4 (levels 0–2), more for the
 * 64-hinge level-5 bases (κ ≈ 5e6, where the project's t differs from the reference by 1.2e-5).
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { columnBasis, gcm, gcmRank, runGcm, runGcmOn, usesRowPath, varianceSample } from "../../../src/audit/methods/gcm.js";
import type { MethodResult, TestContext } from "../../../src/audit/TestMethod.js";
import type { Claim, TestName, TestOutcome } from "../../../src/audit/types.js";
import { buildPatternMoments } from "../../../src/data/buildPatternMoments.js";
import { createTable } from "../../../src/data/createTable.js";
import { readTable } from "../../../src/data/readTable.js";
import type { Table, VariableType } from "../../../src/data/Table.js";
import type { VariableBasis } from "../../../src/stats/flexibleBasis.js";
import { studentTTwoSided } from "../../../src/stats/pvalues.js";
import { mapColumnValues } from "../../helpers/transformTable.js";

interface LinearRef { statistic: number; df: number; p: number; log_p: number; effect: number }
interface ClaimRef {
  data: "shapes" | "small";
  x: string;
  y: string;
  given: string[];
  method: TestName;
  path: "rows" | "moments";
  filter: "listwise" | null;
  n: number;
  untestable?: string;
  level: number;
  max_level: number;
  level_x: number;
  level_y: number;
  parameters: number;
  q: [number, number];
  components: number;
  statistic: number;
  df: number;
  f?: number;
  df2?: number;
  p: number;
  log_p: number;
  effect: number;
  ci: [number, number];
  r?: number;
  chi2_equivalent?: number;
  adjustment: { variable: string; columns: number }[];
  dropped: number;
  constant_columns: number;
  extra_side_columns: number;
  condition: number;
  linear: LinearRef;
}
interface ClaimsFixture {
  source: string;
  types: Record<string, Record<string, VariableType>>;
  listwise: string[];
  claims: ClaimRef[];
}

const fixtureUrl = (name: string) => new URL(`../../fixtures/gcm/${name}`, import.meta.url);
const fixture = JSON.parse(readFileSync(fixtureUrl("claims.json"), "utf8")) as ClaimsFixture;
const SEED = 1;
/** Basis levels held by the pattern moments for the moment path (the reference's moment_level). */
const MOMENT_LEVEL = 3;
const UNIT_ROUNDOFF = 2 ** -53;

const rel = (a: number, b: number) => (b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b));

async function loadTable(name: "shapes" | "small"): Promise<Table> {
  const bytes = readFileSync(fixtureUrl(`${name}.csv`));
  return readTable(new Uint8Array(bytes), { file: `${name}.csv`, types: fixture.types[name] });
}

/** Pattern moments of every column, with the indicator, rank and basis columns (levels 0–3) the moment path reads. */
function contextOf(data: "shapes" | "small", table: Table, rowFilter?: Uint8Array): TestContext {
  const claims = fixture.claims.filter((c) => c.data === data);
  const members = new Set(claims.flatMap((c) => c.given));
  const sample = varianceSample(table, SEED, rowFilter);
  const basis = new Map<string, VariableBasis>();
  for (const v of members) {
    const col = table.column(v)!;
    if (col.type === "continuous") basis.set(v, { levels: columnBasis(col, sample).levels.slice(0, MOMENT_LEVEL + 1) });
  }
  const indicators = [...members].filter((v) => table.column(v)!.type === "ordinal");
  const ranks = [...new Set(claims.filter((c) => c.method === "gcm-rank").flatMap((c) => [c.x, c.y]))].filter((v) => table.column(v)!.type !== "nominal");
  const moments = buildPatternMoments(table, { variables: table.columns.map((c) => c.name), ...(rowFilter ? { rowFilter } : {}), expansions: { indicators, ranks, basis } });
  return { table, moments, seed: SEED, ...(rowFilter ? { rowFilter } : {}) };
}

/** Rows observed on every variable of the fixture's listwise list. */
function listwiseFilter(table: Table): Uint8Array {
  const f = new Uint8Array(table.rows).fill(1);
  for (const v of fixture.listwise) {
    const c = table.column(v)!;
    for (let i = 0; i < table.rows; i++) {
      const missing = c.type === "continuous" ? Number.isNaN(c.values[i]!) : c.codes![i]! < 0;
      if (missing) f[i] = 0;
    }
  }
  return f;
}

const tables = { shapes: await loadTable("shapes"), small: await loadTable("small") };
const contexts = { shapes: contextOf("shapes", tables.shapes), small: contextOf("small", tables.small) };

function outcome(res: MethodResult, where = ""): TestOutcome {
  if (!res.ok) throw new Error(`${where}: ${res.reason}`);
  return res.outcome;
}

const claimOf = (c: ClaimRef): Claim => ({ x: c.x, y: c.y, given: c.given });
const label = (c: ClaimRef) => `${c.method} ${c.data} ${c.x} ⫫ ${c.y} | ${c.given.join(", ") || "∅"} (${c.path}${c.filter ? ", " + c.filter : ""})`;
const run = (c: ClaimRef, ctx: TestContext): TestOutcome => outcome(runGcmOn(c.path, c.method, claimOf(c), ctx), label(c));

interface Details {
  r?: number;
  flexibility: { level: number; max_level: number; level_x: number; level_y: number; parameters: number };
  components: number;
  f?: number;
  df_f?: [number, number];
  variance_rows: number;
  path: string;
  adjustment: { variable: string; entered: string; columns: number }[];
  linear_adjustment?: LinearRef;
}
const detailsOf = (o: TestOutcome) => o.details as unknown as Details;

/** λ = −n ln(1 − e²): the noncentrality behind a point of the several-df effect scale. */
const lambdaOf = (e: number, n: number) => -n * Math.log1p(-e * e);

/** Compare one outcome with its reference (see the module comment for the tolerance). */
function expectMatches(o: TestOutcome, c: ClaimRef): void {
  const where = label(c);
  const d = detailsOf(o);
  const tol = Math.max(1e-8, UNIT_ROUNDOFF * c.condition * c.condition);
  const close = (got: number, want: number, what: string, t: number) => expect(rel(got, want), `${where}: ${what} ${got} vs ${want} (tol ${t})`).toBeLessThanOrEqual(t);
  // exact: rows, levels, parameters, components, degrees of freedom, columns entered and dropped
  expect(o.test, where).toBe(c.method);
  expect(o.n, where).toBe(c.n);
  expect(d.path, where).toBe(c.path);
  expect(d.flexibility, where).toEqual({ level: c.level, max_level: c.max_level, level_x: c.level_x, level_y: c.level_y, parameters: c.parameters });
  expect(d.components, where).toBe(c.components);
  expect(o.df, where).toBe(c.df);
  expect(d.variance_rows, where).toBe(c.n);
  expect(d.adjustment.map((a) => ({ variable: a.variable, columns: a.columns })), where).toEqual(c.adjustment);
  for (const a of d.adjustment) {
    const type = o.n > 0 ? tables[c.data].column(a.variable)!.type : "continuous";
    expect(a.entered, `${where}: ${a.variable}`).toBe(type !== "continuous" ? "indicators" : c.level > 0 ? "spline" : "linear");
  }
  const droppedWarning = (o.warnings ?? []).find((w) => w.includes("aliased"));
  if (c.dropped > 0) expect(droppedWarning, where).toMatch(new RegExp(`^${c.dropped} adjustment columns? of `));
  else expect(droppedWarning, where).toBeUndefined();
  expect(o.p_method).toBe("asymptotic");
  // numbers
  close(o.statistic, c.statistic, "statistic", tol);
  close(o.log_p, c.log_p, "log p", 4 * tol);
  close(o.p, c.p, "p", 4 * tol * Math.max(1, Math.abs(c.log_p))); // p's relative error is |log p| times log p's
  if (c.components === 1) {
    expect(d.f, where).toBeUndefined();
    close(d.r!, c.r!, "r", 4 * tol);
    close(o.effect, c.effect, "effect", 4 * tol);
    // the ends solve (r − ρ)² = k² s²(ρ) with s(0) = |r/t| and the ADF variance beyond (src/stats/residualCorrelationInterval.ts):
    // they move with r and |r/t| at rates of order 1 and k = t_{ν,0.975} < 2.1 for ν ≥ 30, the bound of Fisher's z form tanh(z(1 ± k/|t|)), z = atanh r
    // (the reference: scripts/gcm_reference.py adf_interval, a grid walk and scipy.optimize.brentq on numpy.var of the influence values)
    const z = Math.atanh(c.r!);
    const ciTol = 4 * tol * Math.abs(z) * (1 / (1 - c.r! * c.r!) + 2.1 / Math.abs(c.statistic)) + 1e-15;
    expect(Math.abs(o.ci[0] - c.ci[0]), `${where}: ci lower ${o.ci[0]} vs ${c.ci[0]}`).toBeLessThanOrEqual(ciTol);
    expect(Math.abs(o.ci[1] - c.ci[1]), `${where}: ci upper ${o.ci[1]} vs ${c.ci[1]}`).toBeLessThanOrEqual(ciTol);
  } else {
    close(d.f!, c.f!, "F", tol);
    expect(d.df_f, where).toEqual([c.df, c.df2]);
    // effect and interval compared as noncentralities λ = −n ln(1 − e²): each moves with the
    // chi-square equivalent W at a rate of about 1, and W carries log p's relative error
    const w = c.chi2_equivalent!;
    const lamTol = 10 * tol * (w + c.df) + 1e-12;
    for (const [got, want, what] of [[o.effect, c.effect, "effect"], [o.ci[0], c.ci[0], "ci lower"], [o.ci[1], c.ci[1], "ci upper"]] as const) {
      expect(Math.abs(lambdaOf(got, o.n) - lambdaOf(want, c.n)), `${where}: ${what} ${got} vs ${want}`).toBeLessThanOrEqual(lamTol);
      if (want === 0) expect(got, `${where}: ${what}`).toBe(0);
    }
  }
  // the linear-adjustment check (level 0: well conditioned)
  const lin = d.linear_adjustment!;
  expect(lin, where).toBeDefined();
  expect(lin.df, where).toBe(c.linear.df);
  close(lin.statistic, c.linear.statistic, "linear statistic", 1e-8);
  close(lin.log_p, c.linear.log_p, "linear log p", 1e-8);
  if (c.linear.p > 0) close(lin.p, c.linear.p, "linear p", 1e-8 * Math.max(1, Math.abs(c.linear.log_p)));
  close(lin.effect, c.linear.effect, "linear effect", 1e-8);
}

const tested = fixture.claims.filter((c) => c.untestable === undefined);
/**
 * Claims pinned by the known-discrepancy tests at the end: an adjustment column constant on the
 * complete rows, a nominal side whose moment columns hold more than its present levels, or the
 * member `zoff` (z + 1e5, whose hinge knots agree to 6 significant digits).
 */
const hasConstantColumn = (c: ClaimRef) => c.constant_columns > 0 || c.extra_side_columns > 0 || c.given.includes("zoff");

describe(`gcm and gcm-rank against numpy/scipy (${fixture.source})`, () => {
  it("runGcmOn('rows') matches the reference level, parameters, statistic, df, p, log p, effect, interval and linear check (tol = max(1e-8, u·κ²))", () => {
    const rows = tested.filter((c) => c.path === "rows" && c.filter === null && !hasConstantColumn(c));
    expect(rows.length).toBe(28);
    for (const c of rows) expectMatches(run(c, contexts[c.data]), c);
  });

  it("runGcmOn('moments') with basis columns of levels 0–3 in the pattern moments matches the reference's moment path (every level, no early stop)", () => {
    const moments = tested.filter((c) => c.path === "moments" && !hasConstantColumn(c));
    expect(moments.length).toBe(26);
    for (const c of moments) {
      const o = run(c, contexts[c.data]);
      expectMatches(o, c);
      expect((o.details as { variance_sample?: boolean }).variance_sample, label(c)).toBe(false);
    }
  });

  it("with a row filter (listwise rows), knots and mid-ranks come from the filtered rows (a table object of its own)", async () => {
    const table = await loadTable("shapes");
    const ctx: TestContext = { ...contextOf("shapes", table), rowFilter: listwiseFilter(table) };
    const filtered = tested.filter((c) => c.filter === "listwise");
    expect(filtered.length).toBe(6);
    for (const c of filtered) expectMatches(run(c, ctx), c);
  });

  it("every continuous column times 2^700 (squares beyond the double range) or 2^−700: both paths match the reference of the unscaled data, bit for bit as the unscaled run (regression: NaN and 'constant' on values of 1e155 or more)", () => {
    for (const k of [700, -700]) {
      for (const data of ["shapes", "small"] as const) {
        const continuous = Object.entries(fixture.types[data]!).filter(([, t]) => t === "continuous").map(([name]) => name);
        const scaled = mapColumnValues(tables[data], continuous, (v) => v * 2 ** k);
        const ctx = contextOf(data, scaled);
        const claims = tested.filter((c) => c.data === data && c.filter === null && !hasConstantColumn(c));
        expect(claims.length).toBeGreaterThan(10);
        for (const c of claims) {
          const o = run(c, ctx);
          expectMatches(o, c); // scripts/gcm_reference.py on the unscaled data
          const plain = run(c, contexts[data]);
          expect([o.statistic, o.p, o.effect, ...o.ci], `${label(c)}, k=${k}`).toEqual([plain.statistic, plain.p, plain.effect, ...plain.ci]); // IEEE 754: exact scaling
        }
      }
    }
  });

  it("covers what it claims to: gcm-rank, nominal sides of 3 and 6 components, binary sides, an ordinal side, an empty set, levels 0 to 5, aliased columns and a tail below 1e-300", () => {
    const used = tested.filter((c) => !hasConstantColumn(c));
    expect(used.filter((c) => c.method === "gcm-rank").length).toBeGreaterThanOrEqual(10);
    expect(new Set(used.map((c) => c.components))).toEqual(new Set([1, 2, 3, 6]));
    expect(used.some((c) => c.x === "xb" && c.y === "yb")).toBe(true);
    expect(used.some((c) => c.x === "stage")).toBe(true);
    expect(used.some((c) => c.given.length === 0)).toBe(true);
    expect(new Set(used.filter((c) => c.path === "rows").map((c) => c.level))).toEqual(new Set([0, 1, 2, 3, 4, 5]));
    expect(used.some((c) => c.dropped > 0)).toBe(true);
    expect(Math.min(...used.map((c) => c.linear.log_p))).toBeLessThan(Math.log(1e-300)); // the linear check of x ⫫ strong | z
    expect(used.some((c) => c.max_level === 0 && c.given.length === 7)).toBe(true); // seven continuous members, too few rows for level 1
  });
});

describe("gcm: the row and moment paths", () => {
  it("give the same statistic, p, effect and interval on the same table whenever they choose the same level with the same parameters (14 claims)", () => {
    const rows = tested.filter((c) => c.path === "rows" && c.filter === null && !hasConstantColumn(c));
    let compared = 0;
    for (const r of rows) {
      const m = tested.find((c) => c.path === "moments" && c.data === r.data && c.method === r.method && c.x === r.x && c.y === r.y && c.given.join() === r.given.join());
      if (!m || hasConstantColumn(m) || m.level !== r.level || m.parameters !== r.parameters) continue;
      compared++;
      const a = run(r, contexts[r.data]);
      const b = run(m, contexts[m.data]);
      const tol = Math.max(1e-8, UNIT_ROUNDOFF * r.condition * r.condition);
      const where = label(r);
      expect(detailsOf(a).path).toBe("rows");
      expect(detailsOf(b).path).toBe("moments");
      expect([b.n, b.df, detailsOf(b).components]).toEqual([a.n, a.df, detailsOf(a).components]);
      for (const [x, y, what] of [[a.statistic, b.statistic, "statistic"], [a.log_p, b.log_p, "log p"], [a.effect, b.effect, "effect"], [a.ci[0], b.ci[0], "ci lower"], [a.ci[1], b.ci[1], "ci upper"]] as const) {
        expect(Math.abs(x - y), `${where}: ${what} ${x} vs ${y}`).toBeLessThanOrEqual(4 * tol * Math.max(1e-3, Math.abs(y)));
      }
    }
    expect(compared).toBe(14);
  });

  it("runGcm and the registered methods take the row path for tables of at most 20,000 rows (within the row filter), the moment path above", () => {
    const c = tested.find((c) => c.path === "rows" && c.x === "xb" && c.method === "gcm")!;
    const ctx = contexts.shapes;
    const viaRun = outcome(runGcm("gcm", claimOf(c), ctx));
    expect(outcome(gcm.run(claimOf(c), ctx))).toEqual(viaRun);
    expect(detailsOf(viaRun).path).toBe("rows");
    const r = tested.find((c) => c.path === "rows" && c.method === "gcm-rank")!;
    expect(outcome(gcmRank.run(claimOf(r), ctx))).toEqual(outcome(runGcmOn("rows", "gcm-rank", claimOf(r), ctx)));
    expect(gcm.name).toBe("gcm");
    expect(gcmRank.name).toBe("gcm-rank");
    expect(gcm.accepts({ x: "nominal", y: "continuous", given: ["ordinal", "binary"] })).toBe(true);
    expect(gcm.rowWork!(claimOf(c), tables.shapes)).toBeGreaterThan(0);
    // 20,001 rows: the moment path, unless a row filter keeps at most 20,000 of them
    const big = createTable({ a: Float64Array.from({ length: 20_001 }, (_, i) => i % 7), b: Float64Array.from({ length: 20_001 }, (_, i) => (i * 13) % 11) });
    expect(usesRowPath(tables.shapes)).toBe(true);
    expect(usesRowPath(big)).toBe(false);
    expect(gcm.rowWork!({ x: "a", y: "b", given: [] }, big)).toBe(0);
    const keep = new Uint8Array(20_001).fill(1);
    expect(usesRowPath(big, keep)).toBe(false);
    keep[0] = 0;
    expect(usesRowPath(big, keep)).toBe(true);
  });

  it("every interval contains its effect and excludes 0 exactly when p < 0.05 (the intervals invert their own tests)", () => {
    for (const c of tested.filter((c) => c.filter === null && !hasConstantColumn(c))) {
      const o = run(c, contexts[c.data]);
      expect(o.ci[0] <= o.effect && o.effect <= o.ci[1], label(c)).toBe(true);
      expect(o.ci[0] > 0 || o.ci[1] < 0, label(c)).toBe(o.p < 0.05);
      if (detailsOf(o).components === 1) expect(o.p).toBe(studentTTwoSided(o.statistic, o.df));
    }
  });
});

describe("gcm: untestable claims", () => {
  it("a constant side and a claim with no complete row are untestable with the reason in words (n from the reference)", () => {
    const ctx = contexts.shapes;
    for (const c of fixture.claims.filter((c) => c.untestable !== undefined)) {
      const res = runGcmOn("rows", "gcm", claimOf(c), ctx);
      expect(res.ok, label(c)).toBe(false);
      const reason = res.ok ? "" : res.reason;
      if (c.untestable === "no complete row") expect(reason).toBe(`no row has all of ${[c.x, c.y, ...c.given].map((v) => `"${v}"`).join(", ")} observed`);
      else expect(reason).toBe(`"${c.untestable === "x constant" ? c.x : c.y}" is constant among the ${c.n} complete rows; the claim cannot be tested`);
      const viaMoments = runGcmOn("moments", "gcm", claimOf(c), ctx);
      expect(viaMoments.ok, `${label(c)} on the moment path`).toBe(false);
    }
  });

  it("a variable that is not a column gives a reason naming it", () => {
    expect(runGcm("gcm", { x: "x", y: "nope", given: [] }, contexts.shapes)).toEqual({ ok: false, reason: 'variable "nope" is not a column of the data' });
  });
});

describe("gcm: regressions found against the reference (each pins a bug that made the project disagree with it)", () => {
  // Pins a fixed bug: a column that is constant (here: exactly 0) among the claim's complete rows
  // got a rounding-error variance from the shifted cross-products instead of 0, passed the alias
  // test (which is relative to that variance) and was kept as a parameter. x3 ⫫ y3 | e: y3 is missing
  // above e's 80th percentile, so e's upper hinges are 0 on the complete rows; the reference
  // drops 12 such columns (rows, level 5) and 3 (moments, level 3); the project dropped fewer.
  it("x3 ⫫ y3 | e: hinge columns that are 0 on every complete row are dropped, as in the reference", () => {
    for (const c of tested.filter((c) => c.constant_columns > 0)) expectMatches(run(c, contexts[c.data]), c);
  });

  // Pins a fixed bug: on the moment path a nominal side's columns are the indicators of every
  // level of the column but its first. pair ⫫ x | z: the indicator of level r, absent from the complete
  // rows, had a rounding-error variance from the shifted moments instead of 0 and was kept, so the
  // claim was tested on 2 components (F on 2 df, no linear check) instead of 1.
  it("pair ⫫ x | z on the moment path: the indicator of a level absent from the complete rows is not a component", () => {
    const c = tested.find((c) => c.x === "pair" && c.path === "moments")!;
    expectMatches(run(c, contexts[c.data]), c);
  });

  // Pins a fixed bug, same cause: tri ⫫ y | z on the moment path, where tri's first level (a) is
  // absent from the complete rows, kept three indicators that sum to 1; the per-row multinomial
  // variance (floored and scaled) kept the redundant third residual product from being dropped,
  // so W was right but referred to F(3, ·) instead of F(2, ·), with no linear check.
  it("tri ⫫ y | z on the moment path: with the first level absent, the side has 2 components as on the row path", () => {
    const c = tested.find((c) => c.x === "tri" && c.path === "moments")!;
    expectMatches(run(c, contexts[c.data]), c);
  });

  // Pins a fixed bug: the row path cached each basis column under its label, and a hinge's label gives
  // its knot to 6 significant digits (basisTermLabel), so the hinges of zoff = z + 1e5 (knots
  // 100000.2, 100000.3, ...) shared one cached column and all but one were dropped as aliased;
  // the moment path's sampled columns were keyed by the same label, so its variance read the
  // wrong hinge values. The reference (and the test, which is invariant to the offset) keep 64 columns.
  it("x ⫫ y | zoff, z on an offset of 1e5: the same levels and parameters as for z, on both paths", () => {
    for (const c of tested.filter((c) => c.given.includes("zoff"))) expectMatches(run(c, contexts[c.data]), c);
  });

  // Pins a fixed bug: shifted columns were cached per column and term label, not per row filter
  // or knots, so running claims of one table without and then with a row filter reused mid-ranks
  // and spline columns of the first run.
  it("claims of one table run without and then with a row filter give the reference's filtered results", () => {
    const table = tables.shapes;
    const ctx: TestContext = { ...contexts.shapes, rowFilter: listwiseFilter(table) };
    for (const c of tested.filter((c) => c.filter === null && c.data === "shapes" && c.path === "rows" && !hasConstantColumn(c))) run(c, contexts.shapes);
    for (const c of tested.filter((c) => c.filter === "listwise")) expectMatches(run(c, ctx), c);
  });
});
