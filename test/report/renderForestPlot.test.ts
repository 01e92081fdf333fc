import { describe, expect, it } from "vitest";
import { renderForestPlot } from "../../src/report/renderForestPlot.js";
import { hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { count, hasInjectedMarkup } from "./helpers.js";

describe("renderForestPlot", () => {
  it("renderForestPlot(claims) draws one row per claim in rank order, whatever the input order", () => {
    const r = sampleResult();
    const shuffled = [...r.claims].reverse();
    const svg = renderForestPlot(shuffled, { minEffect: 0 });
    expect(count(svg, /<g class="forest-row /)).toBe(r.claims.length);
    const ranks = [...svg.matchAll(/class="forest-row \w+" data-rank="(\d+)"/g)].map((m) => Number(m[1]));
    expect(ranks).toEqual(r.claims.map((_, i) => i + 1));
  });

  it("renderForestPlot shows the verdict by shape: diamonds for contradicted, circles for consistent", () => {
    const r = sampleResult();
    const svg = renderForestPlot(r.claims);
    const k = r.claims.filter((c) => c.verdict === "contradicted").length;
    expect(count(svg, /class="point contradicted"/)).toBe(k);
    expect(count(svg, /<circle class="point consistent"/)).toBe(r.claims.length - k);
    expect(count(svg, /<line class="ci"/)).toBe(r.claims.length);
    expect(count(svg, /class="zero-line"/)).toBe(1);
  });

  it("renderForestPlot shades the ±minEffect band only when minEffect > 0", () => {
    const claims = sampleResult().claims;
    expect(renderForestPlot(claims, { minEffect: 0.1 })).toContain('class="min-effect-band"');
    expect(renderForestPlot(claims, { minEffect: 0 })).not.toContain("min-effect-band");
    expect(renderForestPlot(claims)).not.toContain("min-effect-band");
  });

  it("renderForestPlot draws axis ticks that include zero and cover every interval", () => {
    const claims = sampleResult().claims;
    const ticks = [...renderForestPlot(claims, { minEffect: 0.1 }).matchAll(/class="tick"[^>]*>([^<]+)</g)].map((m) => Number(m[1]!.replace("\u2212", "-")));
    expect(ticks).toContain(0);
    const lo = Math.min(...claims.map((c) => c.ci[0]));
    const hi = Math.max(...claims.map((c) => c.ci[1]));
    expect(Math.min(...ticks)).toBeLessThanOrEqual(lo);
    expect(Math.max(...ticks)).toBeGreaterThanOrEqual(hi);
    expect(Math.min(...ticks)).toBeLessThanOrEqual(-0.1);
  });

  it("renderForestPlot labels claims 'x ⫫ y | a, b' with ∅ for the empty set", () => {
    const svg = renderForestPlot(sampleResult().claims);
    // the fixture has "age ⫫ district | ∅" (drawn as two up tacks) and "commute_min ⫫ fatigue | sleep_h"
    expect(svg).toMatch(/age ⊥<tspan[^>]*>⊥<\/tspan><tspan[^>]*><\/tspan> district \| ∅</);
    expect(svg).toContain("<title>#7 age ⫫ district | ∅: consistent</title>");
    expect(svg).toContain("fatigue | sleep_h");
  });

  it("renderForestPlot copes with no claims, one claim and non-finite intervals", () => {
    expect(renderForestPlot([])).toContain("No claims were tested");
    const one = { ...sampleResult().claims[0]!, ci: [Number.NaN, Number.NaN] as [number, number] };
    const svg = renderForestPlot([one]);
    expect(count(svg, /<g class="forest-row /)).toBe(1);
    expect(svg).not.toContain("NaN");
    expect(count(svg, /<line class="ci"/)).toBe(0);
  });

  it("renderForestPlot escapes hostile names and references nothing external", () => {
    const svg = renderForestPlot(hostileResult().claims, { minEffect: 0.1 });
    expect(hasInjectedMarkup(svg)).toBe(false);
    expect(svg).not.toMatch(/https?:/);
  });
});
