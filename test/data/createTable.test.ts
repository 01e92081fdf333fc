import { describe, expect, it } from "vitest";
import { DataError } from "../../src/errors.js";
import { createTable } from "../../src/data/createTable.js";
import { readTable } from "../../src/data/readTable.js";

describe("createTable", () => {
  it("createTable types columns exactly as readTable does for the same cells", async () => {
    const t = createTable({ x: [1.5, 2, null, 4.25], s: ["yes", "no", "yes", "NA"], k: [1, 2, 3, 2], g: ["a", "b", "c", "a"] });
    const r = await readTable(new TextEncoder().encode("x,s,k,g\n1.5,yes,1,a\n2,no,2,b\n,yes,3,c\n4.25,NA,2,a\n"));
    expect(t.columns.map((c) => [c.name, c.type, c.levels, c.missing])).toEqual(r.columns.map((c) => [c.name, c.type, c.levels, c.missing]));
    expect(t.warnings).toEqual(r.warnings);
    expect(t.column("s")!.levels).toEqual(["no", "yes"]);
    expect([...t.column("k")!.codes!]).toEqual([0, 1, 2, 1]);
  });

  it("createTable applies declared types and missing codes to numbers", () => {
    const t = createTable({ a: [-9, 1, 2, NaN] }, { missing: ["-9"], types: { a: "nominal" } });
    expect(t.column("a")!.missing).toBe(2);
    expect(t.column("a")!.levels).toEqual(["1", "2"]);
  });

  it("createTable rejects unequal lengths, empty names and infinite numbers", () => {
    expect(() => createTable({ a: [1, 2], b: [1] })).toThrow('table: column "b" has 1 values but column "a" has 2; give every column the same length');
    expect(() => createTable({ "": [1] })).toThrow(DataError);
    expect(() => createTable({ a: [1, Infinity] })).toThrow('table: column "a" row 2 is Infinity; use finite numbers, or NaN for missing');
  });

  it("createTable of no columns or no rows gives an empty table", () => {
    expect(createTable({}).rows).toBe(0);
    const t = createTable({ a: [] });
    expect(t.rows).toBe(0);
    expect(t.column("a")!.values.length).toBe(0);
  });

  it("createTable does not mutate frozen inputs", () => {
    const a = Object.freeze([3, 1, 2]);
    const t = createTable(Object.freeze({ a }));
    expect(a).toEqual([3, 1, 2]);
    expect(t.column("a")!.type).toBe("ordinal");
  });
});
