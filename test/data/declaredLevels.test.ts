import { describe, expect, it } from "vitest";
import { runAudit } from "../../src/audit/runAudit.js";
import { scoreLevels } from "../../src/data/columnBuilder.js";
import { createTable } from "../../src/data/createTable.js";
import { readTable } from "../../src/data/readTable.js";
import type { ReadOptions } from "../../src/data/readOptions.js";
import type { Column, Table } from "../../src/data/Table.js";
import { DataError, UsageError } from "../../src/errors.js";
import { createGraph } from "../../src/graph/createGraph.js";
import { tableSnapshot } from "../helpers/tableSnapshot.js";

// A declared level order (--levels) sets the scores of a numeric-coded binary or ordinal column:
// increasing numeric order keeps the codes as scores, any other order scores the positions 0..k-1.
//
// The data below and every correlation were made with python3 (numpy 2.4.6, scipy 1.17.1):
//   rng = np.random.default_rng(2024); x = np.array([1,2,3,4]*6); rng.shuffle(x)
//   y = np.round(0.8*x + rng.normal(0, 1.0, 24), 3)
//   pain = (x-1)%3+1; edu = {1:1, 2:2, 3:5, 4:5}[x]
//   scipy.stats.pearsonr(scores, y).statistic for the scores named beside each value.
const X = [1, 2, 4, 3, 3, 2, 1, 3, 1, 2, 3, 3, 4, 4, 2, 4, 4, 4, 2, 1, 2, 1, 3, 1];
const Y = [0.849, 2.412, 1.824, 1.964, 1.109, 0.824, 1.703, 0.919, 0.266, 1.764, 1.732, 2.148, 2.978, 3.618, 1.169, 3.472, 3.257, 3.625, 1.825, 2.458, 0.936, 1.999, 1.997, -0.158];
const PAIN = X.map((v) => ((v - 1) % 3) + 1);
const EDU = X.map((v) => [0, 1, 2, 5, 5][v]!);
const R_X_Y = 0.6644259729291321; // scipy.stats.pearsonr(x, y)
const R_REVERSED_Y = -0.6644259729291321; // scipy.stats.pearsonr(4 - x, y): x scored by its position in 4|3|2|1
const R_PAIN_POSITIONS_Y = -0.05494102887654248; // scipy.stats.pearsonr(position of pain in 3|1|2, y)
const R_PAIN_CODES_Y = -0.24197851684149002; // scipy.stats.pearsonr(pain, y)
const R_EDU_CODES_Y = 0.5318195881433977; // scipy.stats.pearsonr(edu with codes 1, 2, 5, y)
const R_EDU_POSITIONS_Y = -0.1060788981396927; // scipy.stats.pearsonr(position of edu in 2|5|1, y)

const CSV = ["x,pain,edu,y", ...X.map((x, i) => `${x},${PAIN[i]},${EDU[i]},${Y[i]}`)].join("\n") + "\n";
const bytes = (s: string) => new TextEncoder().encode(s);

/** Pearson's r of the rows where both are observed (two-pass sums; textbook definition). */
function pearson(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let n = 0;
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < a.length; i++) {
    if (!(a[i] === a[i] && b[i] === b[i])) continue;
    n++;
    ma += a[i]!;
    mb += b[i]!;
  }
  ma /= n;
  mb /= n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < a.length; i++) {
    if (!(a[i] === a[i] && b[i] === b[i])) continue;
    sab += (a[i]! - ma) * (b[i]! - mb);
    saa += (a[i]! - ma) ** 2;
    sbb += (b[i]! - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}

/** Read CSV text with both engines of the streaming reader; they must agree, and the byte scanner's table is returned. */
async function read(text: string, options: ReadOptions = {}): Promise<Table> {
  const viaScan = await readTable(bytes(text), { ...options, file: "cohort.csv" });
  const viaPapa = await readTable(bytes(text), { ...options, file: "cohort.csv", engine: "papaparse" });
  expect(tableSnapshot(viaPapa)).toEqual(tableSnapshot(viaScan));
  return viaScan;
}

async function readError(text: string, options: ReadOptions): Promise<Error> {
  try {
    await readTable(bytes(text), { ...options, file: "cohort.csv" });
  } catch (e) {
    return e as Error;
  }
  throw new Error("expected readTable to throw");
}

/** Every row's code points at the level that is its cell (numbers compared by value), and missing rows have code -1. */
function expectCodesMatchCells(col: Column, cells: readonly (string | number | null)[]): void {
  cells.forEach((cell, i) => {
    if (cell === null) {
      expect(col.codes![i]).toBe(-1);
      return;
    }
    const label = col.levels![col.codes![i]!]!;
    if (typeof cell === "number") expect(Number(label)).toBe(cell);
    else expect(label).toBe(cell);
  });
}

describe("declared levels set the scores of numeric-coded columns", () => {
  it("scoreLevels(numbers, type, declared) keeps increasing numeric codes and scores any other order by position", () => {
    expect(scoreLevels([3, 1, 2], "ordinal", true)).toEqual({ scores: Float64Array.of(0, 1, 2), byPosition: true });
    expect(scoreLevels([1, 2, 5], "ordinal", true)).toEqual({ scores: Float64Array.of(1, 2, 5), byPosition: false });
    expect(scoreLevels([1, 0], "binary", true)).toEqual({ scores: Float64Array.of(0, 1), byPosition: true });
    expect(scoreLevels([-0, 1], "binary", false).scores[0]).toBe(0); // -0 is scored 0
    expect(Object.is(scoreLevels([-0, 1], "binary", false).scores[0], -0)).toBe(false);
    // text levels and nominal columns: positions, with nothing to say
    expect(scoreLevels([undefined, undefined, undefined], "ordinal", true)).toEqual({ scores: Float64Array.of(0, 1, 2), byPosition: false });
    expect(scoreLevels([1, undefined], "binary", true)).toEqual({ scores: Float64Array.of(0, 1), byPosition: false });
    expect(scoreLevels([3, 1, 2], "nominal", true)).toEqual({ scores: Float64Array.of(0, 1, 2), byPosition: false });
  });

  it("readTable with levels x=4|3|2|1 reverses the scores of a numeric-coded ordinal and the sign of its correlation with y (scipy.stats.pearsonr)", async () => {
    const inferred = await read(CSV);
    const x0 = inferred.column("x")!;
    expect(x0.type).toBe("ordinal");
    expect([...x0.values]).toEqual(X);
    expect(Math.abs(pearson(x0.values, inferred.column("y")!.values) - R_X_Y)).toBeLessThan(1e-12);

    const t = await read(CSV, { levels: { x: ["4", "3", "2", "1"] } });
    const x = t.column("x")!;
    expect(x.type).toBe("ordinal");
    expect(x.typeSource).toBe("declared");
    expect(x.levels).toEqual(["4", "3", "2", "1"]);
    expect([...x.values]).toEqual(X.map((v) => 4 - v));
    expect([...x.codes!]).toEqual(X.map((v) => 4 - v));
    expectCodesMatchCells(x, X);
    const r = pearson(x.values, t.column("y")!.values);
    expect(Math.abs(r - R_REVERSED_Y)).toBeLessThan(1e-12);
    expect(Math.abs(r + R_X_Y)).toBeLessThan(1e-12); // exactly the negative
    expect(t.warnings).toContain(
      'column "x": --levels lists its numeric codes out of increasing order (4|3|2|1), so each level scores its position in that order (0 to 3), not its code',
    );
  });

  it("readTable with levels pain=3|1|2 scores each level by its position in the declared order (scipy.stats.pearsonr)", async () => {
    const codes = await read(CSV);
    expect(Math.abs(pearson(codes.column("pain")!.values, codes.column("y")!.values) - R_PAIN_CODES_Y)).toBeLessThan(1e-12);
    const t = await read(CSV, { levels: { pain: ["3", "1", "2"] } });
    const pain = t.column("pain")!;
    const position: Record<number, number> = { 3: 0, 1: 1, 2: 2 };
    expect([...pain.values]).toEqual(PAIN.map((v) => position[v]));
    expect([...pain.codes!]).toEqual(PAIN.map((v) => position[v]));
    expect(pain.levels).toEqual(["3", "1", "2"]);
    expect(Math.abs(pearson(pain.values, t.column("y")!.values) - R_PAIN_POSITIONS_Y)).toBeLessThan(1e-12);
    expect(t.warnings.filter((w) => w.includes('column "pain"'))).toHaveLength(1);
  });

  it("readTable with levels edu=1|2|5 keeps the codes 1, 2, 5 as scores; edu=2|5|1 scores the positions (scipy.stats.pearsonr)", async () => {
    const inc = await read(CSV, { levels: { edu: ["1", "2", "5"] } });
    const edu = inc.column("edu")!;
    expect(edu.type).toBe("ordinal");
    expect([...edu.values]).toEqual(EDU);
    expect([...edu.codes!]).toEqual(EDU.map((v) => [1, 2, 5].indexOf(v)));
    expect(Math.abs(pearson(edu.values, inc.column("y")!.values) - R_EDU_CODES_Y)).toBeLessThan(1e-12);
    expect(inc.warnings.some((w) => w.includes('column "edu"'))).toBe(false);

    const perm = await read(CSV, { levels: { edu: ["2", "5", "1"] } });
    const p = perm.column("edu")!;
    expect([...p.values]).toEqual(EDU.map((v) => [2, 5, 1].indexOf(v)));
    expect([...p.codes!]).toEqual(EDU.map((v) => [2, 5, 1].indexOf(v)));
    expect(p.levels).toEqual(["2", "5", "1"]);
    expectCodesMatchCells(p, EDU);
    expect(Math.abs(pearson(p.values, perm.column("y")!.values) - R_EDU_POSITIONS_Y)).toBeLessThan(1e-12);
    expect(perm.warnings).toContain(
      'column "edu": --levels lists its numeric codes out of increasing order (2|5|1), so each level scores its position in that order (0 to 2), not its code',
    );
  });

  it("readTable matches cells to declared numeric levels by value (1.0 and 01 are the level 1) and keeps the declared labels", async () => {
    const text = "g,y\n1.0,1\n01,2\n2,3\n5.00,4\nNA,5\n";
    const t = await read(text, { levels: { g: ["1", "2.0", "5"] } });
    const g = t.column("g")!;
    expect(g.levels).toEqual(["1", "2.0", "5"]);
    expect([...g.codes!]).toEqual([0, 0, 1, 2, -1]);
    expect([...g.values]).toEqual([1, 1, 2, 5, NaN]); // increasing by value: the numbers are the scores
    expect(g.missing).toBe(1);
  });

  it("readTable gives binary, ordinal and nominal columns codes and levels in the declared order, numeric or text", async () => {
    const text = "b,o,n,t,y\n1,low,3,yes,0.5\n0,high,1,no,1.5\n1,mid,2,no,2.5\n,mid,3,,3.5\n0,low,1,yes,4.5\n";
    const cells = {
      b: [1, 0, 1, null, 0],
      o: ["low", "high", "mid", "mid", "low"],
      n: [3, 1, 2, 3, 1],
      t: ["yes", "no", "no", null, "yes"],
    };
    const t = await read(text, {
      levels: { b: ["1", "0"], o: ["low", "mid", "high"], n: ["3", "1", "2"], t: ["yes", "no"] },
      types: { n: "nominal" },
    });
    const b = t.column("b")!;
    expect([b.type, b.typeSource]).toEqual(["binary", "declared"]);
    expect(b.levels).toEqual(["1", "0"]);
    expect([...b.codes!]).toEqual([0, 1, 0, -1, 1]);
    expect([...b.values]).toEqual([0, 1, 0, NaN, 1]); // 1|0 is not increasing: positions, so the scores flip
    const o = t.column("o")!;
    expect(o.type).toBe("ordinal");
    expect([...o.values]).toEqual([0, 2, 1, 1, 0]);
    const n = t.column("n")!;
    expect(n.type).toBe("nominal");
    expect(n.levels).toEqual(["3", "1", "2"]); // the first declared level is the reference
    expect([...n.codes!]).toEqual([0, 1, 2, 0, 1]);
    expect([...n.values]).toEqual([0, 1, 2, 0, 1]); // nominal values are level positions
    const yes = t.column("t")!;
    expect(yes.type).toBe("binary");
    expect([...yes.values]).toEqual([0, 1, 1, NaN, 0]);
    for (const [name, col] of Object.entries(cells)) expectCodesMatchCells(t.column(name)!, col);
    // only the numeric-coded binary or ordinal column declared out of order is noted: not the nominal one, not text levels
    expect(t.warnings).toEqual([
      'column "b": --levels lists its numeric codes out of increasing order (1|0), so each level scores its position in that order (0 to 1), not its code',
    ]);
  });

  it("createTable applies declared levels like the file reader", async () => {
    const t = createTable({ x: X, y: Y }, { levels: { x: ["4", "3", "2", "1"] } });
    const fromFile = await read(CSV, { levels: { x: ["4", "3", "2", "1"] }, columns: ["x", "y"] });
    expect([...t.column("x")!.values]).toEqual([...fromFile.column("x")!.values]);
    expect([...t.column("x")!.codes!]).toEqual([...fromFile.column("x")!.codes!]);
    expect(t.column("x")!.levels).toEqual(fromFile.column("x")!.levels);
    expect(t.warnings).toEqual(fromFile.warnings);
  });

  it("runAudit reports the declared levels of a variable and tests the declared scores: the partial correlation flips sign (scipy.stats.pearsonr)", () => {
    const graph = createGraph({ nodes: ["x", "y"] }); // no arrow: the claim x ⫫ y
    const asRead = runAudit(graph, createTable({ x: X, y: Y }));
    const reversed = runAudit(graph, createTable({ x: X, y: Y }, { levels: { x: ["4", "3", "2", "1"] } }));
    expect(asRead.variables.find((v) => v.name === "x")!.levels).toEqual(["1", "2", "3", "4"]);
    expect(reversed.variables.find((v) => v.name === "x")!.levels).toEqual(["4", "3", "2", "1"]);
    expect(reversed.warnings.some((w) => w.startsWith('column "x": --levels lists its numeric codes out of increasing order'))).toBe(true);
    // the default test (empty set: the residual correlation is Pearson's r) and the forced linear one
    const linear = { settings: { method: "linear" as const } };
    const pairs = [
      [asRead.claims[0]!, reversed.claims[0]!, "gcm"],
      [runAudit(graph, createTable({ x: X, y: Y }), linear).claims[0]!, runAudit(graph, createTable({ x: X, y: Y }, { levels: { x: ["4", "3", "2", "1"] } }), linear).claims[0]!, "pearson-partial"],
    ] as const;
    for (const [a, b, test] of pairs) {
      expect(a.test).toBe(test);
      expect(b.test).toBe(test);
      expect(Math.abs(a.effect - R_X_Y)).toBeLessThan(1e-9);
      expect(Math.abs(b.effect - R_REVERSED_Y)).toBeLessThan(1e-9);
      expect(b.p).toBeCloseTo(a.p, 12); // the two-sided p-value does not depend on the sign
    }
  });

  it("readTable reports a value outside declared numeric levels with file, line, column, the value and the fixes", async () => {
    const one = await readError("g\n1\n2\n3\n", { levels: { g: ["1", "2"] } });
    expect(one).toBeInstanceOf(DataError);
    expect(one.message).toBe('cohort.csv:4: column "g" has "3", which is not among its levels (1, 2); add it to --levels or declare it with --missing "3"');
    expect([(one as DataError).line, (one as DataError).column]).toEqual([4, 1]);
    // text in a column declared with numeric levels
    const text = await readError("g,h\n1,a\n2,b\nnone,c\n", { levels: { g: ["1", "2"] } });
    expect(text.message).toBe('cohort.csv:4: column "g" has "none", which is not among its levels (1, 2); add it to --levels or declare it with --missing "none"');
    expect((text as DataError).column).toBe(1);
    // several values: each one with the line where it first appears, the first line in the error
    const several = await readError("h,g\na,1\nb,7\nc,2\nd,x\ne,7\nf,9.5\n", { levels: { g: ["1", "2"] } });
    expect(several.message).toBe(
      'cohort.csv:3: column "g" has 3 values that are not among its levels (1, 2): "7" (line 3), "x" (line 5), "9.5" (line 7); add them to --levels or declare them with --missing "7,x,9.5"',
    );
    expect([(several as DataError).line, (several as DataError).column]).toEqual([3, 2]);
    // the papaparse engine reports the same
    await expect(readTable(bytes("h,g\na,1\nb,7\nc,2\nd,x\ne,7\nf,9.5\n"), { file: "cohort.csv", engine: "papaparse", levels: { g: ["1", "2"] } })).rejects.toThrow(several.message);
  });

  it("readTable refuses declarations that contradict themselves: the same number twice, the same label twice, levels of a continuous column", async () => {
    const same = await readError(CSV, { levels: { x: ["1", "1.0", "2"] } });
    expect(same).toBeInstanceOf(UsageError);
    expect(same.message).toBe('--levels: column "x" lists "1" and "1.0", which are the same number; list each level once');
    const twice = await readError(CSV, { levels: { x: ["a", "b", "a"] } });
    expect(twice).toBeInstanceOf(UsageError);
    expect(twice.message).toBe('--levels: column "x" lists the level "a" twice; list each level once');
    const cont = await readError(CSV, { levels: { y: ["1", "2"] }, types: { y: "continuous" } });
    expect(cont).toBeInstanceOf(UsageError);
    expect(cont.message).toBe('--levels: column "y" is declared continuous with --types, and continuous columns have no levels; drop one of the two declarations');
  });
});
