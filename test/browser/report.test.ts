/**
 * The HTML report in a real browser (Debian Chromium driven by playwright-core): it loads with no
 * console error and no network request, the graph's node boxes do not overlap, the standalone SVG
 * parses as XML, and a screenshot is saved to test-artifacts/report.png for a human to look at.
 *
 * Chromium is expected at /usr/bin/chromium. In CI (env CI set) its absence fails the test;
 * locally the test is skipped with a note saying why.
 */
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { renderHtmlReport } from "../../src/report/renderHtmlReport.js";
import { renderReportSvgs } from "../../src/report/renderReportSvgs.js";
import { hostileResult, sampleResult } from "../fixtures/report/sampleResult.js";
import { run } from "../../cli/program.js";
import type { AuditResult } from "../../src/audit/types.js";
import { sampleContext } from "../report/helpers.js";

const CHROMIUM = "/usr/bin/chromium";
const haveChromium = existsSync(CHROMIUM);
const inCI = process.env.CI !== undefined && process.env.CI !== "" && process.env.CI !== "false";
const ARTIFACTS = resolve("test-artifacts");

if (!haveChromium && !inCI) {
  console.warn(`browser tests skipped: ${CHROMIUM} not found and CI is unset (install it with: apt-get install -y chromium)`);
}

describe.skipIf(!haveChromium && !inCI)("HTML report in Chromium", () => {
  let context: BrowserContext;
  let profile: string;
  let page: Page;
  const consoleErrors: string[] = [];
  const requests: string[] = [];
  let demoResult: AuditResult;

  beforeAll(async () => {
    if (!haveChromium) throw new Error(`chromium not found at ${CHROMIUM}; CI must install it (apt-get install -y chromium) before the browser tests`);
    profile = mkdtempSync(join(tmpdir(), "arrowaudit-chromium-"));
    context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
      viewport: { width: 1280, height: 900 },
    });
    // every request other than the report file itself is recorded and refused
    await context.route("**/*", (route) => {
      const url = route.request().url();
      if (url.startsWith("file:") && url.endsWith("report.html")) return route.continue();
      requests.push(url);
      return route.abort();
    });
    page = context.pages()[0] ?? (await context.newPage());
    page.on("console", (m) => {
      if (m.type() === "error") consoleErrors.push(m.text());
    });
    page.on("pageerror", (e) => consoleErrors.push(String(e)));
    page.on("request", (r) => {
      const url = r.url();
      if (!(url.startsWith("file:") && url.endsWith("report.html"))) requests.push(url);
    });

    // The demo report, written by the CLI exactly as `npm start` writes it.
    mkdirSync(ARTIFACTS, { recursive: true });
    const file = join(ARTIFACTS, "report.html");
    let out = "";
    const code = await run(["demo", "--out", file, "--quiet"], {
      stdout: (t) => (out += t),
      stderr: (t) => (out += t),
      stdoutIsTTY: false,
      stderrIsTTY: false,
      env: {},
      cwd: process.cwd(),
      now: () => new Date("2026-01-15T09:30:00Z"),
    });
    if (code !== 0) throw new Error(`arrowaudit demo failed with exit ${code}: ${out}`);
    // The same audit as JSON, to count what the page must show.
    let json = "";
    const jcode = await run(["test", "data/demo/graph.txt", "data/demo/cohort.csv", "--missing", "-9,999", "--levels", "education=primary|secondary|tertiary", "--json"], {
      stdout: (t) => (json += t),
      stderr: () => {},
      stdoutIsTTY: false,
      stderrIsTTY: false,
      env: {},
      cwd: process.cwd(),
      now: () => new Date("2026-01-15T09:30:00Z"),
    });
    if (jcode !== 0) throw new Error(`arrowaudit test --json failed with exit ${jcode}`);
    demoResult = JSON.parse(json) as AuditResult;
    await page.goto(pathToFileURL(file).href, { waitUntil: "load" });
  });

  afterAll(async () => {
    await context?.close();
    if (profile) rmSync(profile, { recursive: true, force: true });
  });

  it("loads with zero console errors and zero network requests", async () => {
    expect(await page.title()).toContain("Graph–data consistency report");
    expect(consoleErrors).toEqual([]);
    expect(requests).toEqual([]);
  });

  it("the request recorder is not vacuous: a page with an external image is caught", async () => {
    const before = requests.length;
    const p2 = await context.newPage();
    await p2.setContent('<img src="http://127.0.0.1:9/probe.png">', { waitUntil: "load" });
    await p2.close();
    expect(requests.slice(before).some((u) => u.includes("probe.png"))).toBe(true);
    requests.splice(before);
  });

  it("draws one box per graph node and no two node boxes overlap", async () => {
    const boxes = await page.$$eval("svg.graph-drawing g.node", (gs) =>
      gs.map((g) => {
        const r = g.getBoundingClientRect();
        return { id: g.getAttribute("data-node"), x: r.x, y: r.y, w: r.width, h: r.height };
      }),
    );
    expect(boxes.map((b) => b.id).sort()).toEqual([...demoResult.graph.nodes].sort());
    for (const b of boxes) {
      expect(b.w).toBeGreaterThan(10);
      expect(b.h).toBeGreaterThan(10);
    }
    for (let i = 0; i < boxes.length; i++)
      for (let j = i + 1; j < boxes.length; j++) {
        const a = boxes[i]!;
        const b = boxes[j]!;
        const overlap = a.x < b.x + b.w && b.x < a.x + a.w && a.y < b.y + b.h && b.y < a.y + a.h;
        expect(overlap, `${a.id} overlaps ${b.id}`).toBe(false);
      }
  });

  it("node labels fit inside their boxes as rendered", async () => {
    const fits = await page.$$eval("svg.graph-drawing g.node", (gs) =>
      gs.map((g) => {
        const shape = g.querySelector("rect, ellipse")!.getBoundingClientRect();
        const text = g.querySelector("text")!.getBoundingClientRect();
        return { id: g.getAttribute("data-node"), ok: text.left >= shape.left - 0.5 && text.right <= shape.right + 0.5 };
      }),
    );
    for (const f of fits) expect(f.ok, `label of ${f.id} overflows its box`).toBe(true);
  });

  it("has one table row per claim and fits a laptop screen without horizontal page scroll", async () => {
    expect(await page.locator("table.claims tbody tr").count()).toBe(demoResult.claims.length);
    expect(demoResult.claims.length).toBeGreaterThan(0);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
  });

  it("the standalone graph SVG parses as well-formed XML", async () => {
    const { graph, forest } = await renderReportSvgs(hostileResult(), { standalone: true });
    const errors = await page.evaluate(
      (docs) => docs.map((d) => new DOMParser().parseFromString(d, "image/svg+xml").getElementsByTagName("parsererror").length),
      [graph, forest],
    );
    expect(errors).toEqual([0, 0]);
  });

  it("hostile names stay text: no script runs and no image element appears", async () => {
    const result = hostileResult();
    const html = renderHtmlReport(result, sampleContext(), await renderReportSvgs(result));
    const p2 = await context.newPage();
    const dialogs: string[] = [];
    p2.on("dialog", (d) => {
      dialogs.push(d.message());
      void d.dismiss();
    });
    await p2.setContent(html, { waitUntil: "load" });
    expect(await p2.locator("script, img").count()).toBe(0);
    expect(await p2.locator("[onerror]").count()).toBe(0);
    expect(dialogs).toEqual([]);
    expect(await p2.locator("table.variables").innerText()).toContain("<script>alert(1)</script>");
    await p2.close();
  });

  it("saves a full-page screenshot to test-artifacts/report.png", async () => {
    const path = join(ARTIFACTS, "report.png");
    await page.screenshot({ path, fullPage: true });
    expect(existsSync(path)).toBe(true);
    // print media renders too
    await page.emulateMedia({ media: "print" });
    expect(await page.locator("nav.toc").isVisible()).toBe(false);
    await page.emulateMedia({ media: "screen" });
  });
});
