/**
 * The generalised covariance measure test (`gcm`, `gcm-rank`) against an independent numpy/scipy
 * implementation: scripts/gcm_reference.py wrote the data (test/fixtures/gcm/shapes.csv,
 * small.csv) and every reference outcome (test/fixtures/gcm/claims.json) — least squares by
 * numpy.linalg.lstsq on the row matrix, knots by numpy.quantile, tails by scipy.stats (mpmath
 * below 1e-300), intervals by scipy.stats.t.ppf and scipy.optimize.brentq on scipy.stats.ncx2.sf.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { columnBasis, gcm, gcmRank, runGcm, runGcmOn, varianceSample } from "../../../src/audit/methods/gcm.js";
import type { MethodResult, TestContext } from "../../../src/audit/TestMethod.js";
import type { TestName, TestOutcome } from "../../../src/audit/types.js";
import { buildPatternMoments } from "../../../src/data/buildPatternMoments.js";
import { readTable } from "../../../src/data/readTable.js";
import type { Table, VariableType } from "../../../src/data/Table.js";
import type { VariableBasis } from "../../../src/stats/flexibleBasis.js";
import { studentTTwoSided } from "../../../src/stats/pvalues.js";

interface LinearRef { statistic: number; df: number; p: number; log_p: number; effect: number }
interface ClaimRef {
  data: "shapes" | "small";
  x: string;
  y: string;
  given: string[];
  method: TestName;
  path: "rows" | "moments";
  filter: "listwise" | null;
  moment_level?: number;
  n: number;
  untestable?: string;
  level: number;
  max_level: number;
  level_x: number;
  level_y: number;
  parameters: number;
  levels_computed: number;
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
  adjustment: { variable: string; columns: number }[];
  dropped: number;
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
/** Basis levels the moment path's expansions hold (the reference's moment_level). */
const MOMENT_LEVEL = 3;

const rel = (a: number, b: number) => (b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b));

async function loadTable(name: "shapes" | "small"): Promise<Table> {
  const bytes = readFileSync(fixtureUrl(`${name}.csv`));
  return readTable(new Uint8Array(bytes), { file: `${name}.csv`, types: fixture.types[name] });
}

const tables = { shapes: await loadTable("shapes"), small: await loadTable("small") };

/** Pattern moments of every column, with the indicator, rank and basis columns (levels 0..3) the moment path reads. */
function contextOf(table: Table, rowFilter?: Uint8Array): TestContext {
  const names = table.columns.map((c) => c.name);
  const claims = fixture.claims.filter((c) => tables[c.data] === table);
  const members = new Set(claims.flatMap((c) => c.given));
  const sample = varianceSample(table, SEED, rowFilter);
  const basis = new Map<string, VariableBasis>();
  for (const v of members) {
    const col = table.column(v)!;
    if (col.type === "continuous") basis.set(v, { levels: columnBasis(col, sample).levels.slice(0, MOMENT_LEVEL + 1) });
  }
  const indicators = [...members].filter((v) => table.column(v)!.type === "ordinal");
  const ranks = [...new Set(claims.filter((c) => c.method === "gcm-rank").flatMap((c) => [c.x, c.y]))].filter((v) => table.column(v)!.type !== "nominal");
  const moments = buildPatternMoments(table, { variables: names, ...(rowFilter ? { rowFilter } : {}), expansions: { indicators, ranks, basis } });
  return { table, moments, seed: SEED, ...(rowFilter ? { rowFilter } : {}) };
}

function listwiseFilter(table: Table): Uint8Array {
  const f = new Uint8Array(table.rows).fill(1);
  for (const v of fixture.listwise) {
    const c = table.column(v)!;
    for (let i = 0; i < table.rows; i++) {
      const missing = c.codes && c.type !== "continuous" ? c.codes[i]! < 0 : Number.isNaN(c.values[i]!);
      if (missing) f[i] = 0;
    }
  }
  return f;
}

function outcome(res: MethodResult): TestOutcome {
  if (!res.ok) throw new Error(res.reason);
  return res.outcome;
}

const label = (c: ClaimRef) => `${c.method} ${c.data} ${c.x} ⫫ ${c.y} | ${c.given.join(", ") || "∅"} (${c.path}${c.filter ? ", " + c.filter : ""})`;

interface Flex { level: number; max_level: number; level_x: number; level_y: number; parameters: number }
interface Details {
  r?: number;
  flexibility: Flex;
  components: number;
  f?: number;
  df_f?: [number, number];
  variance_rows: number;
  path: string;
  adjustment: { variable: string; entered: string; columns: number }[];
  linear_adjustment: LinearRef;
}

/** Compare one outcome with its reference: exact for counts and levels, relative 1e-8 for numbers. */
function expectMatches(o: TestOutcome, c: ClaimRef): void {
  const where = label(c);
  const d = o.details as unknown as Details;
  expect(o.test, where).toBe(c.method);
  expect(o.n, where).toBe(c.n);
  expect(d.path, where).toBe(c.path);
  expect(d.flexibility, where).toEqual({ level: c.level, max_level: c.max_level, level_x: c.level_x, level_y: c.level_y, parameters: c.parameters });
  expect(d.components, where).toBe(c.components);
  expect(o.df, where).toBe(c.df);
  expect(d.variance_rows, where).toBe(c.n);
  expect(d.adjustment.map((a) => ({ variable: a.variable, columns: a.columns })), where).toEqual(c.adjustment);
  const dropped = (o.warnings ?? []).find((w) => w.includes("aliased"));
  if (c.dropped > 0) expect(dropped, where).toMatch(new RegExp(`^${c.dropped} adjustment column`));
  else expect(dropped, where).toBeUndefined();
  const close = (got: number, want: number, what: string, tol = 1e-8) => expect(rel(got, want), `${where}: ${what} ${got} vs ${want}`).toBeLessThanOrEqual(tol);
  close(o.statistic, c.statistic, "statistic");
  close(o.p, c.p, "p");
  close(o.log_p, c.log_p, "log p");
  close(o.effect, c.effect, "effect");
  close(o.ci[0], c.ci[0], "ci lower");
  close(o.ci[1], c.ci[1], "ci upper");
  if (c.components === 1) close(d.r!, c.r!, "r");
  else {
    close(d.f!, c.f!, "F");
    expect(d.df_f, where).toEqual([c.df, c.df2]);
  }
  const lin = d.linear_adjustment;
  expect(lin.df, where).toBe(c.linear.df);
  close(lin.statistic, c.linear.statistic, "linear statistic");
  close(lin.log_p, c.linear.log_p, "linear log p");
  if (c.linear.p > 0) close(lin.p, c.linear.p, "linear p");
  close(lin.effect, c.linear.effect, "linear effect");
}

const tested = fixture.claims.filter((c) => c.untestable === undefined);
const contexts = { shapes: contextOf(tables.shapes), small: contextOf(tables.small) };

function run(c: ClaimRef, ctx: TestContext): TestOutcome {
  return outcome(runGcmOn(c.path, c.method, { x: c.x, y: c.y, given: c.given }, ctx));
}

describe(`gcm and gcm-rank against numpy/scipy (${fixture.source})`, () => {
  it("runGcmOn('rows') matches the reference level, parameters, statistic, df, p, log p, effect, interval and linear check (1e-8)", () => {
    const rows = tested.filter((c) => c.path === "rows" && c.filter === null);
    expect(rows.length).toBeGreaterThanOrEqual(25);
    for (const c of rows) expectMatches(run(c, contexts[c.data]), c);
  });

  it("runGcmOn('moments') with basis columns of levels 0–3 in the pattern moments matches the reference's moment path (all levels, no early stop)", () => {
    const moments = tested.filter((c) => c.path === "moments");
    expect(moments.length).toBeGreaterThanOrEqual(20);
    for (const c of moments) expectMatches(run(c, contexts[c.data]), c);
  });

  it("with a row filter (listwise rows), knots and mid-ranks come from the filtered rows as in the reference", () => {
    const table = tables.shapes;
    const ctx: TestContext = { ...contexts.shapes, rowFilter: listwiseFilter(table) };
    const filtered = tested.filter((c) => c.filter === "listwise");
    expect(filtered.length).toBe(6);
    for (const c of filtered) expectMatches(run(c, ctx), c);
  });
});
