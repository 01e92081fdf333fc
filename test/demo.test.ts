import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";

const root = join(import.meta.dirname, "..");

describe("demo data", () => {
  it("data/generate-demo.ts rewrites the committed demo files byte for byte (seeded)", () => {
    const dir = mkdtempSync(join(tmpdir(), "arrowaudit-demo-"));
    try {
      const r = spawnSync(process.execPath, ["--import", "tsx", join(root, "data", "generate-demo.ts"), dir], { cwd: root, encoding: "utf8" });
      expect(r.status, r.stderr).toBe(0);
      for (const f of ["cohort.csv", "graph.txt"]) {
        expect(readFileSync(join(dir, f)).equals(readFileSync(join(root, "data", "demo", f))), f).toBe(true);
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("the demo README and graph say plainly that the data are invented", () => {
    expect(readFileSync(join(root, "data", "demo", "README.md"), "utf8")).toMatch(/\*\*These data are invented\.\*\*/);
    expect(readFileSync(join(root, "data", "demo", "graph.txt"), "utf8")).toMatch(/invented/);
  });
});
