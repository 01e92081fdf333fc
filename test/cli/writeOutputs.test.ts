/**
 * Writing output files: temporaries named so that a later run can recognise them, groups
 * replaced together or not at all, a failed write leaving nothing behind, devices written in
 * place, permissions kept, and the temporaries of a process killed by SIGKILL removed by the next
 * run. Exit codes of signals follow the shell convention (128 + the signal's number).
 */
import { spawnSync } from "node:child_process";
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { afterAll, describe, expect, it } from "vitest";
import { OutputWriteError } from "../../cli/fileErrors.js";
import { exitCodeForSignal } from "../../cli/signals.js";
import { removeStaleTemporaries, temporaryName, writeOutputs } from "../../cli/writeOutputs.js";

const root = join(import.meta.dirname, "..", "..");
const work = mkdtempSync(join(tmpdir(), "arrowaudit-write-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));
let n = 0;
const folder = () => {
  const d = join(work, `t${n++}`);
  mkdirSync(d);
  return d;
};
const temps = (dir: string) => readdirSync(dir).filter((f) => f.endsWith(".tmp"));

describe("writeOutputs", () => {
  it("temporaryName @example, and a long target name is cut so the temporary stays a valid file name", () => {
    expect(temporaryName("report.md", 4242, "0123456789ab")).toBe(".report.md.arrowaudit-4242-0123456789ab.tmp");
    const long = temporaryName("x".repeat(250) + ".md", 7, "0123456789ab");
    expect(long.length).toBeLessThanOrEqual(255); // NAME_MAX of Linux file systems (from memory)
  });

  it("writeOutputs replaces a group of files and leaves no temporary", () => {
    const dir = folder();
    writeFileSync(join(dir, "r.md"), "old");
    writeFileSync(join(dir, "r.svg"), "old");
    const last = writeOutputs({ cwd: dir }, [
      { path: "r.svg", content: "<svg/>" },
      { path: "r.md", content: "# new" },
    ]);
    expect(last).toBe(join(dir, "r.md"));
    expect(readFileSync(join(dir, "r.svg"), "utf8")).toBe("<svg/>");
    expect(readFileSync(join(dir, "r.md"), "utf8")).toBe("# new");
    expect(temps(dir)).toEqual([]);
  });

  it("writeOutputs replaces nothing when one file of the group cannot be written, and removes every temporary", () => {
    const dir = folder();
    writeFileSync(join(dir, "r.svg"), "old drawing");
    let err: unknown;
    try {
      writeOutputs({ cwd: dir }, [
        { path: "r.svg", content: "<svg/>" },
        { path: "missing-folder/r.md", content: "# new" },
      ]);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(OutputWriteError);
    expect((err as Error).message).toBe("cannot write missing-folder/r.md: no such file or folder (ENOENT)");
    expect(readFileSync(join(dir, "r.svg"), "utf8")).toBe("old drawing");
    expect(temps(dir)).toEqual([]);
  });

  it("writeOutputs keeps the permission bits of the file it replaces", () => {
    const dir = folder();
    writeFileSync(join(dir, "private.html"), "old");
    chmodSync(join(dir, "private.html"), 0o600);
    writeOutputs({ cwd: dir }, [{ path: "private.html", content: "new" }]);
    expect(statSync(join(dir, "private.html")).mode & 0o777).toBe(0o600);
  });

  it("writeOutputs writes a device in place and never puts a temporary beside it (rename over /dev/null would replace the device)", () => {
    const before = readdirSync("/dev").filter((f) => f.includes("arrowaudit"));
    writeOutputs({ cwd: work }, [{ path: "/dev/null", content: "discarded" }]);
    expect(statSync("/dev/null").isCharacterDevice()).toBe(true);
    expect(readdirSync("/dev").filter((f) => f.includes("arrowaudit"))).toEqual(before);
  });

  it("writeOutputs asks for signals to wait before it writes", () => {
    const dir = folder();
    const calls: string[] = [];
    writeOutputs({ cwd: dir, deferSignals: () => calls.push("defer") }, [{ path: "a.txt", content: "a" }], { afterTemporaries: () => calls.push("temporaries") });
    expect(calls).toEqual(["defer", "temporaries"]);
  });

  it("temporaries of a process killed by SIGKILL after writing them are removed by the next write of the same file; others are kept", () => {
    const dir = folder();
    writeFileSync(join(dir, "r.md"), "old report");
    writeFileSync(join(dir, "r.svg"), "old drawing");
    const tsx = pathToFileURL(createRequire(join(root, "package.json")).resolve("tsx")).href;
    const script = `import { writeOutputs } from ${JSON.stringify(pathToFileURL(join(root, "cli", "writeOutputs.ts")).href)};
writeOutputs({ cwd: ${JSON.stringify(dir)} }, [{ path: "r.svg", content: "<svg>new</svg>" }, { path: "r.md", content: "new report" }], { afterTemporaries: () => process.kill(process.pid, "SIGKILL") });`;
    const child = spawnSync(process.execPath, ["--import", tsx, "--input-type=module", "-e", script], { encoding: "utf8" });
    expect(child.signal).toBe("SIGKILL");
    // killed between writing the temporaries and renaming them: both old files intact, two temporaries left
    expect(readFileSync(join(dir, "r.md"), "utf8")).toBe("old report");
    expect(readFileSync(join(dir, "r.svg"), "utf8")).toBe("old drawing");
    const left = temps(dir);
    expect(left.sort()).toEqual([expect.stringMatching(new RegExp(`^\\.r\\.md\\.arrowaudit-${child.pid}-[0-9a-f]{12}\\.tmp$`)), expect.stringMatching(new RegExp(`^\\.r\\.svg\\.arrowaudit-${child.pid}-[0-9a-f]{12}\\.tmp$`))]);
    const other = `.notes.md.arrowaudit-${child.pid}-0123456789ab.tmp`; // another target's: not this write's business
    writeFileSync(join(dir, other), "");
    writeOutputs({ cwd: dir }, [{ path: "r.svg", content: "<svg/>" }, { path: "r.md", content: "# newer" }]);
    expect(temps(dir)).toEqual([other]);
    expect(removeStaleTemporaries(join(dir, "notes.md"))).toEqual([other]);
    expect(existsSync(join(dir, other))).toBe(false);
  });
});

describe("exit codes of signals", () => {
  it("exitCodeForSignal is 128 + the signal's number (POSIX shell convention; SIGINT 2, SIGTERM 15, SIGHUP 1 on Linux, signal(7))", () => {
    expect(exitCodeForSignal("SIGINT")).toBe(130);
    expect(exitCodeForSignal("SIGTERM")).toBe(143);
    expect(exitCodeForSignal("SIGHUP")).toBe(129);
  });
});
