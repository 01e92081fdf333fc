import { describe, expect, it } from "vitest";
import { middleEllipsis, renderClaimsText, renderTestText, uniqueShortNames } from "../../src/report/terminal.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

describe("middleEllipsis", () => {
  it("middleEllipsis keeps short names and cuts long ones in the middle to the width", () => {
    expect(middleEllipsis("bmi", 10)).toBe("bmi");
    expect(middleEllipsis("systolic_blood_pressure", 12)).toBe("systol…ssure");
    expect([...middleEllipsis("systolic_blood_pressure", 12)].length).toBe(12);
    expect(middleEllipsis("systolic_blood_pressure", 12, true)).toBe("systo...sure");
    expect(middleEllipsis("血压血压血压血压血压", 5)).toBe("血压…血压");
  });
});

describe("renderTestText", () => {
  const long = (() => {
    const r = sampleResult();
    r.claims[0]!.x = "a_very_long_variable_name_from_a_cohort_file_with_many_words";
    return r;
  })();
  it("renderTestText fits 100 columns, long names shortened, and uses no colour unless asked", () => {
    const text = renderTestText(long);
    for (const line of text.split("\n")) expect([...line].length).toBeLessThanOrEqual(100);
    expect(text).not.toMatch(/\u001b\[/);
    expect(renderTestText(long, { color: true })).toMatch(/\u001b\[/);
  });
  it("renderTestText never prints a p-value of 0 and shows p < 0.001 as such", () => {
    const r = sampleResult();
    r.claims[0]!.p = 1e-300;
    r.claims[0]!.p_adjusted = 1e-298;
    const text = renderTestText(r);
    expect(text).toContain("< 0.001");
    expect(text).not.toMatch(/\s0\.000\s/);
  });
  it("renderTestText --ascii output is pure ASCII", () => {
    const text = renderTestText(sampleResult(), { ascii: true });
    expect(/^[\x00-\x7f]*$/.test(text.replace(/[^\x00-\x7f]/g, (c) => (c === "⫫" ? "X" : c)))).toBe(true);
    expect(text).toContain(" indep ");
    expect(text).toContain(" given ");
    expect(text).not.toContain("⫫");
  });
});

/** Anything a terminal acts on: C0, DEL, C1 (ECMA-48 §5) or a bidi embedding, override or isolate (Unicode UAX #9 §2). */
const UNSAFE = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/;
/** Our own colour sequences (SGR, ECMA-48 §8.3.117), removed before looking for data-borne controls. */
const stripOwnColour = (s: string) => s.replace(/\u001b\[[0-9;]*m/g, "");

/** The sample result with terminal-hostile names: an OSC title change, an SGR colour, a C1 CSI and a right-to-left override. */
function terminalHostile() {
  const r = sampleResult();
  const rename: Record<string, string> = {
    fatigue: "fat\u001b]0;owned\u0007igue",
    sbp: "sbp\u001b[31m",
    bmi: "b\u009b2Jmi",
    age: "age\u202eelif",
  };
  const rn = (s: string) => rename[s] ?? s;
  r.data.file = "data\u001b[2J.csv";
  r.variables = r.variables.map((v) => ({ ...v, name: rn(v.name) }));
  r.claims = r.claims.map((c) => ({ ...c, x: rn(c.x), y: rn(c.y), given: c.given.map(rn), arrows: c.arrows.map((a) => a.split(" ").map(rn).join(" ")) }));
  r.untestable = r.untestable.map((u) => ({ ...u, x: rn(u.x), y: rn(u.y), reason: `${u.reason} \u001b]52;c;Y29weQ==\u0007` }));
  r.warnings = [...r.warnings, "level \u001b[5mblink\u001b[0m is sparse"];
  r.global = { ...r.global, note: `${r.global.note} \u202e` };
  return r;
}

describe("renderTestText and renderClaimsText with terminal-hostile names", () => {
  it("renderTestText shows control characters and bidi overrides as escapes in claims, variables, untestable reasons, warnings and notes", () => {
    // regression: names from the data file were printed raw, so a column name could retitle or recolour the terminal
    const r = terminalHostile();
    for (const opts of [{}, { ascii: true }, { width: 60 }, { color: true }]) {
      const text = stripOwnColour(renderTestText(r, opts));
      expect(UNSAFE.test(text), JSON.stringify(opts)).toBe(false);
      expect(text).toContain("\\x1b]0;owned\\x07");
      expect(text).toContain("\\x9b2J");
      expect(text).toContain("\\u202e");
      expect(text).toContain("data\\x1b[2J.csv");
      expect(text).toContain("\\x1b]52;c;Y29weQ==\\x07");
      expect(text).toContain("\\x1b[5mblink\\x1b[0m");
    }
  });

  it("renderClaimsText shows control characters as escapes too", () => {
    const r = terminalHostile();
    const listing = { graph: r.graph, claims: r.claims, untestable: r.untestable };
    for (const ascii of [false, true]) {
      const text = renderClaimsText(listing, { ascii });
      expect(UNSAFE.test(text)).toBe(false);
      expect(text).toContain("\\x1b[31m");
    }
  });
});

describe("renderTestText width", () => {
  const long = () => {
    const r = sampleResult();
    r.claims[0]!.x = "a_very_long_variable_name_from_a_cohort_file_with_many_words";
    return r;
  };
  it("renderTestText fits any width from 40 to 160 columns (table when the claim column has room, else one block per claim)", () => {
    // regression: the table was always 100 columns wide, whatever the terminal
    for (const width of [40, 52, 60, 72, 80, 100, 120, 160]) {
      const text = renderTestText(long(), { width });
      for (const line of text.split("\n")) expect([...line].length, `width ${width}: ${line}`).toBeLessThanOrEqual(width);
      for (const c of sampleResult().claims) expect(text).toMatch(new RegExp(`^ *${c.rank}  `, "m"));
    }
    expect(renderTestText(long(), { width: 120 })).toMatch(/^ *# +claim +n +test/m);
    expect(renderTestText(long(), { width: 60 }).replace(/\n\s+/g, " ")).toContain("ranked claims (verdict; effect [95% CI]; detectable; p; adjusted p; n; test):");
  });

  it("renderTestText uses the full width it is given: wider lines at 160 than at 100", () => {
    const longest = (w: number) => Math.max(...renderTestText(long(), { width: w }).split("\n").map((l) => [...l].length));
    expect(longest(160)).toBeGreaterThan(100);
    expect(longest(100)).toBeLessThanOrEqual(100);
  });
});

describe("name shortening", () => {
  it("uniqueShortNames never gives two names the same short form, nor another name's full form", () => {
    // regression: "occupation_mother_baseline" and "occupation_father_baseline" both became "occu…ine"
    const names = ["occupation_mother_baseline", "occupation_father_baseline", "occupation_region", "occupation_subregion", "occ…ine", "bmi"];
    for (const max of [4, 6, 9, 12, 20]) {
      const short = uniqueShortNames(names, max);
      const shown = names.map((n) => short.get(n)!);
      expect(new Set(shown).size, `max ${max}: ${shown.join(" | ")}`).toBe(names.length);
      expect(short.get("bmi")).toBe("bmi");
    }
  });

  it("renderTestText keeps names that shorten alike apart, and writes ∅ for an empty set, never '| …'", () => {
    const r = sampleResult();
    const a = "occupation_of_the_mother_at_the_baseline_visit";
    const b = "occupation_of_the_father_at_the_baseline_visit";
    r.claims[0] = { ...r.claims[0]!, x: a, y: b, given: [] };
    r.untestable = [{ x: a, y: b, given: [], reason: "the set's only column is constant" }, ...r.untestable];
    for (const width of [60, 80, 100]) {
      for (const ascii of [false, true]) {
        const text = renderTestText(r, { width, ascii });
        const row = text.split("\n").findIndex((l) => /^ *1  /.test(l));
        const block = text.split("\n").slice(row, row + 4).join(" ").replace(/\s+/g, " ");
        const shown = [...block.matchAll(ascii ? /"?(occ[^\s"]*)"?/g : /(occ\S*)/g)].map((m) => m[1]);
        expect(shown.length, block).toBeGreaterThanOrEqual(2);
        expect(shown[0], block).not.toBe(shown[1]);
        expect(block).toContain(ascii ? "given nothing" : "| ∅");
        expect(text).not.toContain("| …");
        expect(text.replace(/\n\s+/g, " ")).toContain(ascii ? "given nothing: the set's only column is constant" : "| ∅: the set's only column is constant");
      }
    }
  });

  it("renderTestText does not shorten a name that fits its line (regression: 'activi…_days ⫫ smoker' in a 25-column claim column)", () => {
    const r = sampleResult();
    r.claims[1] = { ...r.claims[1]!, x: "activity_days", y: "smoker", given: ["education"] };
    const text = renderTestText(r);
    expect(text).toContain("activity_days ⫫ smoker");
    expect(text).not.toMatch(/activi…/);
  });
});

describe("renderTestText global line", () => {
  it("renderTestText says there is no global test when nothing was tested (regression: 'p = > 0.999')", () => {
    const r = sampleResult();
    const none = { ...r, claims: [], global: { ...r.global, statistic: 0, df: 0, p: 1, k: 0, contradicted: 0, expected_by_chance: 0 } };
    const text = renderTestText(none);
    expect(text).toContain("no claim could be tested");
    expect(text).toContain("global: no claim was tested, so there is no global test");
    expect(text).not.toMatch(/= [<>]/);
  });

  it("renderTestText writes p > 0.999 without '=' and puts the unadjusted count beside its chance expectation", () => {
    const r = sampleResult();
    const text = renderTestText({ ...r, global: { ...r.global, p: 0.9996 } }).replace(/\n\s+/g, " ");
    expect(text).toContain("p > 0.999;");
    expect(text).not.toMatch(/= [<>]/);
    const unadjusted = r.claims.filter((c) => c.p < 0.05).length;
    expect(text).toContain(`${unadjusted} of 14 claims reach unadjusted p < 0.05, where 0.70 would be expected by chance alone if every claim held`);
    expect(text).toContain("3 are contradicted (Holm-adjusted p < 0.05, |effect| ≥ 0.1), a rule that keeps the chance of any false contradiction (family-wise error rate) at most 0.05");
  });

  it("renderTestText explains why an interval excluding 0 sits beside a consistent verdict", () => {
    const r = sampleResult();
    const text = renderTestText(r).replace(/\n\s+/g, " ");
    const odd = r.claims.filter((c) => c.verdict === "consistent" && (c.ci[0] > 0 || c.ci[1] < 0)).map((c) => `#${c.rank}`);
    expect(odd.length).toBeGreaterThan(0);
    expect(text).toContain(`note: the intervals are unadjusted 95% intervals and the verdicts use Holm-adjusted p-values and the relevance floor 0.1, so an interval and its verdict can disagree (${odd.join(", ")})`);
  });
});
