import { describe, expect, it } from "vitest";
import { UsageError } from "../../src/errors.js";
import {
  DEFAULT_MISSING_CODES,
  parseLevelDeclarations,
  parseMissingCodes,
  parseMissingSpec,
  parseNameList,
  parseTypeDeclarations,
  splitOptionList,
} from "../../src/data/readOptions.js";

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

  it("parseMissingSpec reads bare codes for every column and name=code for one column, a name several times", () => {
    const spec = parseMissingSpec("fage=0,fedu=0,-9, fedu = 99 ");
    expect(spec.codes).toEqual(["-9"]);
    expect({ ...spec.byColumn }).toEqual({ fage: ["0"], fedu: ["0", "99"] });
    expect(parseMissingSpec("").codes).toEqual([]);
    expect(() => parseMissingSpec("=0")).toThrow('--missing: "=0" has no column name before "="; write name=code, or quote a code that holds "=" ("...")');
    // parseMissingCodes keeps its contract (codes for every column) and says when a list names columns
    expect(() => parseMissingCodes("fage=0")).toThrow(UsageError);
  });

  it("splitOptionList quotes names and codes that hold , = or quotes (doubled, as in RFC 4180 fields)", () => {
    const items = splitOptionList('"weight, kg"=0, "<=5", "say ""no"""=x, a=b=c', "--missing");
    expect(items.map(({ name, value }) => ({ name, value }))).toEqual([
      { name: "weight, kg", value: "0" },
      { name: undefined, value: "<=5" },
      { name: 'say "no"', value: "x" },
      { name: "a", value: "b=c" }, // a name stops at the first =, a value runs to the next comma
    ]);
    expect(parseMissingSpec('"a=b"').codes).toEqual(["a=b"]);
    expect(() => splitOptionList('"open', "--missing")).toThrow('--missing: a double quote is never closed in ""open"; close it, and double a quote inside quotes ("")');
    expect(() => splitOptionList('"a"b=1', "--types")).toThrow(UsageError);
    expect(() => splitOptionList('a"b=1', "--types")).toThrow(UsageError);
    expect(parseTypeDeclarations('"weight, kg"=continuous')["weight, kg"]).toBe("continuous");
  });

  it("parseNameList reads --ignore names and refuses =, empty names and repeats (also in two Unicode forms)", () => {
    expect(parseNameList("id, visit_date", "--ignore")).toEqual(["id", "visit_date"]);
    expect(parseNameList('"a,b",c', "--ignore")).toEqual(["a,b", "c"]);
    expect(() => parseNameList("id,,x", "--ignore")).toThrow(UsageError);
    expect(() => parseNameList("x=1", "--ignore")).toThrow(UsageError);
    expect(() => parseNameList("\u00e2ge,a\u0302ge", "--ignore")).toThrow('--ignore: column "a\u0302ge" is given twice; give it once');
  });

  it("the option parsers return null-prototype records, so names like __proto__ and constructor are plain keys", () => {
    // regression: `constructor` as a column name read Object.prototype.constructor as its declared levels
    const types = parseTypeDeclarations("__proto__=nominal,constructor=binary,toString=ordinal");
    expect(Object.getPrototypeOf(types)).toBeNull();
    expect(Object.keys(types)).toEqual(["__proto__", "constructor", "toString"]);
    expect(types["__proto__"]).toBe("nominal");
    const levels = parseLevelDeclarations("valueOf=a|b,hasOwnProperty=x|y|z");
    expect(Object.keys(levels)).toEqual(["valueOf", "hasOwnProperty"]);
    expect(parseLevelDeclarations("x=a|b")["constructor"]).toBeUndefined();
    const missing = parseMissingSpec("__proto__=0,constructor=9");
    expect(Object.keys(missing.byColumn)).toEqual(["__proto__", "constructor"]);
  });
});
