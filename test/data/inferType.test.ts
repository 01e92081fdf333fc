import { describe, expect, it } from "vitest";
import { inferType, type ColumnSummary } from "../../src/data/inferType.js";

const base: ColumnSummary = { name: "v", observed: 100, numbers: 100, texts: 0, distinctNumbers: 11, allIntegers: false, distinctTexts: 0 };

describe("inferType", () => {
  it("inferType reads two distinct values as binary, numeric or text", () => {
    expect(inferType({ ...base, distinctNumbers: 2, allIntegers: false })).toEqual({ kind: "type", type: "binary" });
    expect(inferType({ ...base, numbers: 0, texts: 100, distinctNumbers: 0, distinctTexts: 2 })).toEqual({ kind: "type", type: "binary" });
  });

  it("inferType reads 3 to 10 distinct integers as ordinal with a note, 11 or non-integers as continuous", () => {
    for (const k of [3, 10]) {
      const r = inferType({ ...base, distinctNumbers: k, allIntegers: true });
      expect(r).toMatchObject({ kind: "type", type: "ordinal" });
      expect(r.kind === "type" && r.note).toBe(`column "v": inferred ordinal from ${k} integer levels; declare it with --types v=continuous (or nominal) if not`);
    }
    expect(inferType({ ...base, distinctNumbers: 11, allIntegers: true })).toEqual({ kind: "type", type: "continuous" });
    expect(inferType({ ...base, distinctNumbers: 5, allIntegers: false })).toEqual({ kind: "type", type: "continuous" });
  });

  it("inferType reports stray text at 90% numbers or more, nominal below", () => {
    expect(inferType({ ...base, numbers: 90, texts: 10 })).toEqual({ kind: "strayText" });
    expect(inferType({ ...base, numbers: 89, texts: 11, distinctTexts: 1 })).toMatchObject({ kind: "type", type: "nominal" });
  });

  it("inferType notes all-missing, constant and identifier-like columns", () => {
    expect(inferType({ ...base, observed: 0, numbers: 0, distinctNumbers: 0 })).toMatchObject({ type: "continuous", note: 'column "v" is entirely missing' });
    expect(inferType({ ...base, distinctNumbers: 1 })).toMatchObject({ type: "continuous", note: 'column "v" is constant' });
    const id = inferType({ ...base, numbers: 0, texts: 100, distinctNumbers: 0, distinctTexts: 60 });
    expect(id.kind === "type" && id.note).toContain("looks like an identifier");
    const notId = inferType({ ...base, numbers: 0, texts: 100, distinctNumbers: 0, distinctTexts: 20 });
    expect(notId).toEqual({ kind: "type", type: "nominal" });
  });
});
