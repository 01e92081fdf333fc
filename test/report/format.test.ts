import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  claimLabel,
  effectDigits,
  formatCI,
  formatCount,
  formatEffect,
  formatEffectWithCI,
  formatP,
  formatPInline,
  formatStatistic,
} from "../../src/report/format.js";

describe("formatP", () => {
  it("formatP(p) writes '< 0.001' below the floor and never '0'", () => {
    // reporting convention: common practice (three decimals, "< 0.001" floor)
    expect(formatP(0)).toBe("< 0.001");
    expect(formatP(Number.MIN_VALUE)).toBe("< 0.001");
    expect(formatP(1e-300)).toBe("< 0.001");
    expect(formatP(0.000999)).toBe("< 0.001");
    expect(formatP(0.001)).toBe("0.001");
  });

  it("formatP(p) gives three decimals in the middle and '> 0.999' at the top", () => {
    expect(formatP(0.04817)).toBe("0.048");
    expect(formatP(0.05)).toBe("0.050");
    expect(formatP(0.41)).toBe("0.410");
    expect(formatP(0.999)).toBe("0.999");
    expect(formatP(0.9996)).toBe("> 0.999");
    expect(formatP(1)).toBe("> 0.999");
  });

  it("formatP(p) writes n/a for non-finite input", () => {
    expect(formatP(Number.NaN)).toBe("n/a");
    expect(formatP(Number.POSITIVE_INFINITY)).toBe("n/a");
  });

  it("formatP(p) never prints zero and is monotone in p (property)", () => {
    const order = (s: string): number => (s === "< 0.001" ? -1 : s === "> 0.999" ? 2 : Number(s));
    fc.assert(
      fc.property(fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }), (a, b) => {
        const fa = formatP(a);
        expect(fa).not.toMatch(/^0(\.0+)?$/);
        if (a <= b) expect(order(fa)).toBeLessThanOrEqual(order(formatP(b)));
      }),
    );
  });

  it("formatPInline(p) uses '=' for values and the sign for bounds", () => {
    expect(formatPInline(0.032)).toBe("p = 0.032");
    expect(formatPInline(1e-9)).toBe("p < 0.001");
    expect(formatPInline(1)).toBe("p > 0.999");
  });
});

describe("formatEffect / formatCI", () => {
  it("formatEffect(e) uses two decimals, three below 0.1 in absolute value", () => {
    expect(effectDigits(0.2149)).toBe(2);
    expect(effectDigits(-0.0999)).toBe(3);
    expect(formatEffect(0.2149)).toBe("0.21");
    expect(formatEffect(-0.0421)).toBe("-0.042");
    expect(formatEffect(0.5, 3)).toBe("0.500");
  });

  it("formatEffect(e) never writes negative zero", () => {
    expect(formatEffect(-0.0001)).toBe("0.000");
    expect(formatEffect(-0.001, 2)).toBe("0.00");
    expect(formatEffect(-0)).toBe("0.000");
  });

  it("formatCI and formatEffectWithCI use matching decimals", () => {
    expect(formatCI([0.12, 0.31])).toBe("[0.12, 0.31]");
    expect(formatCI([-0.05, 0.31])).toBe("[-0.050, 0.310]");
    expect(formatEffectWithCI(0.083, [0.021, 0.145])).toBe("0.083 [0.021, 0.145]");
    expect(formatEffectWithCI(0.21, [0.05, 0.36])).toBe("0.21 [0.05, 0.36]");
    expect(formatEffect(Number.NaN)).toBe("n/a");
  });

  it("formatStatistic and formatCount", () => {
    expect(formatStatistic(12.3456)).toBe("12.35");
    expect(formatStatistic(Number.NaN)).toBe("n/a");
    expect(formatCount(0)).toBe("0");
    expect(formatCount(999)).toBe("999");
    expect(formatCount(1204)).toBe("1,204");
    expect(formatCount(1234567)).toBe("1,234,567");
    expect(formatCount(-1000)).toBe("-1,000");
  });
});

describe("claimLabel", () => {
  it("claimLabel(claim) writes the empty set as ∅, or 'given nothing' in ASCII", () => {
    expect(claimLabel({ x: "a", y: "b", given: [] })).toBe("a ⫫ b | ∅");
    expect(claimLabel({ x: "a", y: "b", given: [] }, true)).toBe("a indep b given nothing");
  });

  it("claimLabel(claim) lists the conditioning set in the given order, Unicode names untouched", () => {
    expect(claimLabel({ x: "âge", y: "体重", given: ["c", "d"] })).toBe("âge ⫫ 体重 | c, d");
    expect(claimLabel({ x: "a", y: "b", given: ["c", "d"] }, true)).toBe("a indep b given c, d");
    // ascii form contains only ASCII for ASCII names
    expect(claimLabel({ x: "a", y: "b", given: [] }, true)).toMatch(/^[\x20-\x7e]+$/);
  });
});
