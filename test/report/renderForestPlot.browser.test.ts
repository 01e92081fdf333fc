/**
 * The forest plot as a real browser draws it (Debian Chromium through playwright-core): every
 * text, bold labels included, ends inside the drawing. Skipped with a note when Chromium is
 * missing outside CI, as in test/browser/report.test.ts.
 */
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromium, type BrowserContext } from "playwright-core";
import { renderForestPlot } from "../../src/report/renderForestPlot.js";
import { sampleResult } from "../fixtures/report/sampleResult.js";

const CHROMIUM = "/usr/bin/chromium";
const haveChromium = existsSync(CHROMIUM);
const inCI = process.env.CI !== undefined && process.env.CI !== "" && process.env.CI !== "false";
if (!haveChromium && !inCI) console.warn(`forest plot browser test skipped: ${CHROMIUM} not found and CI is unset`);

describe.skipIf(!haveChromium && !inCI)("renderForestPlot in Chromium", () => {
  let context: BrowserContext;
  let profile: string;
  beforeAll(async () => {
    profile = mkdtempSync(join(tmpdir(), "arrowaudit-forest-"));
    context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--no-first-run"],
    });
  }, 60_000);
  afterAll(async () => {
    await context?.close();
    if (profile) rmSync(profile, { recursive: true, force: true });
  });

  it("renderForestPlot: every text ends inside the drawing as rendered (bold labels of contradicted claims included)", async () => {
    // regression: the label "r = −0.065 [−0.102, −0.028]" of a contradicted claim ran past the right edge and lost its bracket
    const r = sampleResult();
    r.claims[0] = { ...r.claims[0]!, effect: -0.065, ci: [-0.102, -0.028], verdict: "contradicted" };
    const page = await context.newPage();
    for (const opts of [{}, { alpha: 0.05, adjust: "holm" as const, minEffect: 0.1 }]) {
      const svg = renderForestPlot(r.claims, { ...opts, standalone: true });
      await page.setContent(`<!doctype html><html><body style="margin:0">${svg}</body></html>`, { waitUntil: "load" });
      const { width, texts } = await page.$eval("svg.forest-plot", (el) => {
        const root = el as unknown as SVGSVGElement;
        const w = root.viewBox.baseVal.width;
        const scale = root.getBoundingClientRect().width / w;
        const left = root.getBoundingClientRect().left;
        return {
          width: w,
          texts: [...root.querySelectorAll("text")].map((t) => ({ text: t.textContent ?? "", right: (t.getBoundingClientRect().right - left) / scale })),
        };
      });
      expect(texts.length).toBeGreaterThan(r.claims.length);
      for (const t of texts) expect(t.right, `${JSON.stringify(opts)}: "${t.text}" ends at ${t.right.toFixed(1)} of ${width}`).toBeLessThanOrEqual(width);
    }
    await page.close();
  });
});
