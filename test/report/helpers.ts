import type { ReportContext } from "../../src/report/ReportContext.js";

/** A report context for tests: invented command, fixed date and made-up digests. */
export function sampleContext(overrides: Partial<ReportContext> = {}): ReportContext {
  return {
    command: "arrowaudit check graph.txt invented-commuters.csv --html report.html",
    date: "2025-01-15T10:00:00Z",
    inputs: [
      { path: "graph.txt", sha256: "0f".repeat(32) },
      { path: "invented-commuters.csv", sha256: "a1".repeat(32) },
    ],
    toolVersion: "0.1.0",
    ...overrides,
  };
}

/** Number of non-overlapping occurrences of `re` in `s`. */
export function count(s: string, re: RegExp): number {
  return [...s.matchAll(new RegExp(re.source, re.flags.includes("g") ? re.flags : re.flags + "g"))].length;
}

/**
 * True when `html` contains markup injected from data: a script or img tag, or an event-handler
 * attribute inside any tag. Data-derived `<` is always escaped, so every real tag is ours.
 */
export function hasInjectedMarkup(html: string): boolean {
  return /<script/i.test(html) || /<img/i.test(html) || /<[^>]*\son[a-z]+\s*=/i.test(html);
}
