/**
 * Reading site summaries for pooling (cli/loadSiteSummaries.ts, parseSiteSummary and
 * checkSitesAgree): the faster decoding and claim checks keep what the slower ones accepted and
 * refused. A byte-order mark is ignored, bytes that are not UTF-8 are refused naming the file, and
 * summaries whose claims differ (order or set) are refused. Data: two invented sites of 200 rows.
 */
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";
import type { SiteSummary } from "../../src/audit/siteSummary.js";

let dir = "";

/** A seeded linear chain a → b → c with d apart (rows of 4 values, 3 decimals). */
function rows(seed: number, n: number): string {
  let s = seed >>> 0;
  const u = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) + 0.5) / 2 ** 32;
  const z = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
  const lines = ["a,b,c,d"];
  for (let i = 0; i < n; i++) {
    const a = z();
    const b = 0.6 * a + z();
    const c = 0.5 * b + z();
    lines.push([a, b, c, z()].map((v) => v.toFixed(3)).join(","));
  }
  return lines.join("\n") + "\n";
}

async function ok(args: string[]): Promise<string> {
  const r = await runCli(args, { cwd: dir });
  if (r.code !== 0) throw new Error(`arrowaudit ${args.join(" ")}: exit ${r.code}: ${r.stderr}`);
  return r.stdout;
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), "arrowaudit-site-reading-"));
  writeFileSync(join(dir, "g.txt"), "a -> b\nb -> c\nd\n");
  writeFileSync(join(dir, "a.csv"), rows(11, 200));
  writeFileSync(join(dir, "b.csv"), rows(12, 200));
  await ok(["summarize", "g.txt", "a.csv", "--out", "a.json", "--quiet"]);
  await ok(["summarize", "g.txt", "b.csv", "--out", "b.json", "--quiet"]);
}, 60_000);

describe("test <graph> a.json b.json reads summaries as before", () => {
  it("a summary with a byte-order mark pools exactly as without it", async () => {
    const plain = await ok(["test", "g.txt", "a.json", "b.json", "--json", "--quiet"]);
    writeFileSync(join(dir, "b-bom.json"), Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), readFileSync(join(dir, "b.json"))]));
    const bom = await ok(["test", "g.txt", "a.json", "b-bom.json", "--json", "--quiet"]);
    const strip = (s: string) => s.replaceAll("b-bom.json", "b.json");
    expect(strip(bom)).toBe(plain);
    expect((JSON.parse(plain) as { claims: unknown[] }).claims.length).toBe(4); // a ⫫ c | b, and d with each of a, b, c
  }, 30_000);

  it("bytes that are not UTF-8 are refused with exit 2, naming the file", async () => {
    const bytes = readFileSync(join(dir, "b.json"));
    const at = bytes.indexOf(Buffer.from('"site": "b"')) + 10; // the b of the site name
    const bad = Buffer.from(bytes);
    bad[at] = 0xff; // never valid in UTF-8
    writeFileSync(join(dir, "b-latin.json"), bad);
    const r = await runCli(["test", "g.txt", "a.json", "b-latin.json", "--json"], { cwd: dir });
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("b-latin.json: the site summary is not UTF-8 text");
  }, 30_000);

  it("summaries whose claims differ in order or in a set are refused with exit 2", async () => {
    const b = JSON.parse(readFileSync(join(dir, "b.json"), "utf8")) as SiteSummary;
    const swapped = { ...b, claims: [b.claims[1]!, b.claims[0]!, ...b.claims.slice(2)] };
    writeFileSync(join(dir, "b-order.json"), JSON.stringify(swapped));
    const withSet = b.claims.findIndex((c) => c.given.length > 0);
    expect(withSet).toBeGreaterThanOrEqual(0);
    const otherSet = { ...b, claims: b.claims.map((c, i) => (i === withSet ? { ...c, given: [...c.given, "d"] } : c)) };
    writeFileSync(join(dir, "b-set.json"), JSON.stringify(otherSet));
    for (const file of ["b-order.json", "b-set.json"]) {
      const r = await runCli(["test", "g.txt", "a.json", file, "--json"], { cwd: dir });
      expect(r.code).toBe(2);
      expect(r.stderr).toContain(`${file}: lists other claims than a.json`);
    }
  }, 30_000);
});
