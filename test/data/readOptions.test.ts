import { describe, expect, it } from "vitest";
import { UsageError } from "../../src/errors.js";
import { DEFAULT_MISSING_CODES, parseLevelDeclarations, parseMissingCodes, parseTypeDeclarations } from "../../src/data/readOptions.js";

describe("readOptions", () => {
  it("parseMissingCodes splits and trims a comma list", () => {
    expect(parseMissingCodes("-9,999")).toEqual(["-9", "999"]);
    expect(parseMissingCodes(" -9 , >180 ")).toEqual(["-9", ">180"]);
    expect(parseMissingCodes("")).toEqual([]);
    expect(DEFAULT_MISSING_CODES).toEqual(["", "NA", "N/A", "NaN", ".", "NULL"]);
  });

  it("parseTypeDeclarations reads name=type pairs and rejects unknown types, missing = and repeats", () => {
    expect(parseTypeDeclarations("education=ordinal,region=nominal")).toEqual({ education: "ordinal", region: "nominal" });
    expect(parseTypeDeclarations(" âge = continuous ")).toEqual({ âge: "continuous" });
    expect(parseTypeDeclarations("")).toEqual({});
    expect(() => parseTypeDeclarations("x=interval")).toThrow(UsageError);
    expect(() => parseTypeDeclarations("x=interval")).toThrow('--types: "interval" for column "x" is not a type; use one of continuous, binary, ordinal, nominal');
    expect(() => parseTypeDeclarations("x")).toThrow('--types: "x" has no "="; write name=value');
    expect(() => parseTypeDeclarations("=binary")).toThrow(UsageError);
    expect(() => parseTypeDeclarations("x=binary,x=nominal")).toThrow('--types: column "x" is given twice; give it once');
  });

  it("parseLevelDeclarations reads name=a|b|c lists and rejects single, empty and repeated levels", () => {
    expect(parseLevelDeclarations("education=low|mid|high")).toEqual({ education: ["low", "mid", "high"] });
    expect(parseLevelDeclarations("education=low|mid|high,sex=f|m")).toEqual({ education: ["low", "mid", "high"], sex: ["f", "m"] });
    expect(() => parseLevelDeclarations("e=low")).toThrow('--levels: column "e" has only the level "low"; list at least two levels separated by |');
    expect(() => parseLevelDeclarations("e=low||high")).toThrow(UsageError);
    expect(() => parseLevelDeclarations("e=low|low")).toThrow('--levels: column "e" lists the level "low" twice; list each level once');
  });
});
