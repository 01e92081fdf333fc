/**
 * The build inlines @stdlib's special functions into dist/src/stats/special.js
 * (scripts/bundleSpecial.mjs, run by `npm run build`, which `npm install` runs). The bundled file
 * must need no @stdlib package at run time and give the very doubles the packages give. The
 * functions themselves are checked against scipy and mpmath in pvalues.test.ts.
 */
import { existsSync, readFileSync } from "node:fs";
import { fileURLToPath, pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import { betainc, erfc } from "../../src/stats/special.js";

const bundled = fileURLToPath(new URL("../../dist/src/stats/special.js", import.meta.url));

describe("the bundled special functions (dist/src/stats/special.js)", () => {
  it("exists after the build (npm install runs it; else run npm run build)", () => {
    expect(existsSync(bundled), `${bundled} is missing: run npm run build`).toBe(true);
  });

  it("loads no @stdlib package: every import or require of one is inlined", () => {
    const text = readFileSync(bundled, "utf8");
    expect(text).not.toMatch(/(?:from\s*|require\(\s*|import\(\s*)["']@stdlib\//);
    expect(text).toMatch(/export\s*\{[^}]*\bbetainc\b[^}]*\berfc\b|export\s*\{[^}]*\berfc\b[^}]*\bbetainc\b/);
  });

  it("gives the same doubles as the packages over a grid of arguments, both tails", async () => {
    const lib = (await import(pathToFileURL(bundled).href)) as { betainc: typeof betainc; erfc: typeof erfc };
    for (const x of [0, 1e-300, 1e-12, 0.001, 0.3, 0.5, 0.77, 0.999, 1]) {
      for (const a of [0.5, 1, 2.5, 17, 1e4, 45_000.5]) {
        for (const b of [0.5, 1, 3, 250]) {
          for (const upper of [false, true]) expect(lib.betainc(x, a, b, true, upper), `betainc(${x}, ${a}, ${b}, upper ${upper})`).toBe(betainc(x, a, b, true, upper));
        }
      }
    }
    for (const z of [-5, -1, 0, 1e-8, 0.5, 1, 3, 10, 26.5, 27.3]) expect(lib.erfc(z), `erfc(${z})`).toBe(erfc(z));
  });
});
