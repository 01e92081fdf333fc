import { describe, expect, it } from "vitest";
import { renderForestPlot } from "../../src/report/renderForestPlot.js";
import { hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { estimateTextWidth } from "../../src/report/textWidth.js";
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

describe("renderForestPlot: adjusted intervals and sizing", () => {
  /** Text elements of an SVG: x, anchor, size, weight and content (tags removed, entities decoded). */
  function texts(svg: string): { x: number; anchor: string; size: number; bold: boolean; text: string }[] {
    const rootSize = Number(/<svg[^>]*font-size="([\d.]+)"/.exec(svg)![1]);
    return [...svg.matchAll(/<text([^>]*)>(.*?)<\/text>/g)].map((m) => {
      const attrs = m[1]!;
      const get = (name: string) => new RegExp(`\\s${name}="([^"]*)"`).exec(attrs)?.[1];
      const text = m[2]!.replace(/<[^>]+>/g, "").replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, "&");
      return { x: Number(get("x")), anchor: get("text-anchor") ?? "start", size: Number(get("font-size") ?? rootSize), bold: get("font-weight") === "600", text };
    });
  }

  it("renderForestPlot with alpha draws each claim's adjusted interval beside its 95% interval and says which is which", () => {
    const r = sampleResult();
    const svg = renderForestPlot(r.claims, { alpha: 0.05, adjust: "holm", minEffect: 0.1 });
    expect(count(svg, /<line class="ci-adjusted"/)).toBe(r.claims.length);
    expect(count(svg, /<line class="ci"/)).toBe(r.claims.length);
    expect(count(svg, /<text class="adjusted"/)).toBe(r.claims.length);
    expect(svg).toContain("95% confidence interval (unadjusted)");
    expect(svg).toContain("interval at the Holm-adjusted level of each claim, as its verdict");
    expect(renderForestPlot(r.claims, { alpha: 0.05, adjust: "bh" })).toContain("Benjamini–Hochberg-adjusted level");
    // without alpha, no adjusted interval is drawn
    expect(renderForestPlot(r.claims)).not.toContain("ci-adjusted");
  });

  it("renderForestPlot names the interval's level 1 − alpha, and says for several-df effects that the lower limit inverts the test at alpha", () => {
    const r = sampleResult(); // holds regression LRs on 2 and 4 df
    const svg = renderForestPlot(r.claims, { alpha: 0.01 });
    expect(svg).toContain("99% confidence interval (unadjusted)");
    expect(svg).toContain("estimate [99% CI]");
    expect(svg).toContain("effect and 99% CI");
    expect(svg).toContain("effects on several df (never negative): the lower limit inverts the test at level α = 0.01, one-sided, so it is above 0 exactly when p &lt; α");
    expect(renderForestPlot(r.claims, { alpha: 0.001 })).toContain("99.9% confidence interval (unadjusted)");
    // only 1-df and correlation effects: no such line
    const oneDf = r.claims.filter((c) => c.df === 1 || c.test === "pearson-partial" || c.test === "gcm-rank");
    expect(oneDf.length).toBeGreaterThan(0);
    expect(renderForestPlot(oneDf, { alpha: 0.05 })).not.toContain("effects on several df");
  });

  it("renderForestPlot is as wide as its texts: no label runs past the right edge (estimated widths, bold included)", () => {
    // regression: the bold label "r = −0.065 [−0.102, −0.028]" of a contradicted claim lost its closing bracket
    const r = sampleResult();
    r.claims[0] = { ...r.claims[0]!, effect: -0.065, ci: [-0.102, -0.028], verdict: "contradicted" };
    for (const opts of [{}, { alpha: 0.05 }, { alpha: 0.05, minEffect: 0.1 }, { alpha: 0.05, plotWidth: 120 }]) {
      const svg = renderForestPlot(r.claims, opts);
      const width = Number(/<svg[^>]* width="([\d.]+)"/.exec(svg)![1]);
      for (const t of texts(svg)) {
        const w = estimateTextWidth(t.text, t.size) * (t.bold ? 1.12 : 1);
        const right = t.anchor === "middle" ? t.x + w / 2 : t.anchor === "end" ? t.x : t.x + w;
        expect(right, `${JSON.stringify(opts)}: "${t.text}"`).toBeLessThanOrEqual(width - 8);
      }
      expect(svg).toContain("[−0.102, −0.028]");
    }
  });
});
