/**
 * Column names that are properties of every JavaScript object (`constructor`, `__proto__`,
 * `toString`, ...) or that hold the option-list separators, used as graph nodes, data columns
 * and in --types, --levels and --missing: a property test of read → audit through the command
 * line, in-process (fast-check, the suite's fixed seed from test/setup.ts).
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import fc from "fast-check";
import { afterAll, describe, expect, it } from "vitest";
import { runCli } from "../helpers/runCli.js";

const work = mkdtempSync(join(tmpdir(), "arrowaudit-names-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** Own or inherited properties of every object (ECMAScript Object.prototype, plus the legacy accessors). */
const PROTOTYPE_NAMES = ["constructor", "__proto__", "toString", "hasOwnProperty", "valueOf", "isPrototypeOf", "propertyIsEnumerable", "toLocaleString", "__defineGetter__", "__lookupSetter__"];

/** A random name: letters, digits and the characters that separate option lists, no blank space at the ends. */
const randomName = fc
  .array(fc.constantFrom(..."abcXYZ019_.,;=\"' -é"), { minLength: 1, maxLength: 8 })
  .map((cs) => cs.join("").trim())
  .filter((s) => s !== "");
const names = fc.uniqueArray(fc.oneof(fc.constantFrom(...PROTOTYPE_NAMES), randomName), { minLength: 3, maxLength: 6, selector: (s) => s.normalize("NFC") });

const graphName = (n: string) => `"${n.replace(/\\/g, "\\\\").replace(/"/g, '\\"')}"`;
const csvField = (n: string) => `"${n.replace(/"/g, '""')}"`;
const listName = (n: string) => `"${n.replace(/"/g, '""')}"`; // the option-list grammar of src/data/readOptions.ts

const cli = (args: string[]) => runCli(args, { cwd: work });

describe("names that are properties of every object", () => {
  it("arrowaudit test reads and audits columns named constructor, __proto__, toString, ... with --types, --levels and --missing on them (property)", async () => {
    // regression: a column named constructor crashed with "declaredLevels is not iterable" (exit 10)
    let case_ = 0;
    await fc.assert(
      fc.asyncProperty(names, fc.integer({ min: 1, max: 2 ** 31 - 1 }), async (cols, seed) => {
        const k = cols.length;
        let s = seed;
        const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
        // column j: j % 4 = 0 continuous (some -9 codes), 1 binary text, 2 ordinal 1-4, 3 nominal text
        const lines = [cols.map(csvField).join(",")];
        for (let r = 0; r < 80; r++) {
          lines.push(
            cols
              .map((_, j) => {
                if (j % 4 === 0) return rnd() < 0.05 ? "-9" : (rnd() * 10).toFixed(3);
                if (j % 4 === 1) return rnd() < 0.5 ? "lo" : "hi";
                if (j % 4 === 2) return String(1 + Math.floor(rnd() * 4));
                return ["x", "y", "z"][Math.floor(rnd() * 3)]!;
              })
              .join(","),
          );
        }
        const graph = cols.slice(1).map((c, j) => `${graphName(cols[j]!)} -> ${graphName(c)}`).join("\n") + "\n";
        const g = `g${case_}.txt`;
        const d = `d${case_++}.csv`;
        writeFileSync(join(work, g), graph);
        writeFileSync(join(work, d), lines.join("\n") + "\n");
        const args = [
          "test", g, d, "--json",
          "--types", `${listName(cols[2]!)}=nominal`,
          "--levels", `${listName(cols[1]!)}=lo|hi`,
          "--missing", `${listName(cols[0]!)}=-9,-99`,
        ];
        const r = await cli(args);
        expect(r.stderr, r.stderr).not.toContain("internal error");
        expect(r.code, r.stderr).toBe(0);
        const doc = JSON.parse(r.stdout) as { variables: { name: string; type: string; type_source: string }[]; claims: unknown[]; untestable: unknown[] };
        expect(doc.variables.map((v) => v.name).sort()).toEqual([...cols].sort());
        const byName = new Map(doc.variables.map((v) => [v.name, v]));
        expect(byName.get(cols[2]!)).toMatchObject({ type: "nominal", type_source: "declared" });
        expect(byName.get(cols[1]!)).toMatchObject({ type: "binary", type_source: "declared" });
        // a chain of k nodes has (k − 1)(k − 2)/2 missing arrows, each a claim or an untestable entry
        expect(doc.claims.length + doc.untestable.length).toBe(((k - 1) * (k - 2)) / 2);
      }),
      { numRuns: 25 },
    );
  });
});
