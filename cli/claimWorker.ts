/**
 * Worker thread of {@link claimHelper} (and of `siteClaimHelper`, for `summarize`): rebuilds the table from the columns it was sent, then
 * takes claims from the shared counter until none is left, posting each result as it is done.
 * A claim that throws (it should not) is not answered: the main thread tests it again and
 * reports what happens there.
 */
import { parentPort, workerData } from "node:worker_threads";
import { helperContext, testClaimMethod } from "../src/audit/runAudit.js";
import { assembleTable } from "../src/data/columnBuilder.js";
import type { ClaimReply, ClaimTask, SiteClaimReply, SiteClaimTask } from "./claimHelper.js";
import { flexibleClaimContext, flexibleClaimSummary } from "../src/audit/siteSummary.js";

if (parentPort && workerData && (workerData as { kind?: string }).kind === "claims") {
  const task = (workerData as { task: ClaimTask }).task;
  const table = assembleTable(task.file, task.rows, task.columns, []);
  const ctx = helperContext(table, task.settings, task.rowFilter, task.decisionFloor);
  const port = parentPort;
  for (;;) {
    const k = Atomics.add(task.counter, 0, 1);
    if (k >= task.claims.length) break;
    try {
      const result = testClaimMethod(task.claims[k]!, ctx, task.settings);
      Atomics.add(task.counter, 1, 1);
      port.postMessage({ k, result } satisfies ClaimReply);
    } catch {
      // left to the main thread
    }
  }
  port.postMessage({ done: true } satisfies ClaimReply);
}

if (parentPort && workerData && (workerData as { kind?: string }).kind === "siteClaims") {
  const task = (workerData as { task: SiteClaimTask }).task;
  const table = assembleTable(task.file, task.rows, task.columns, []);
  const ctx = flexibleClaimContext(table, task.moments);
  const port = parentPort;
  for (;;) {
    const k = Atomics.add(task.counter, 0, 1);
    if (k >= task.claims.length) break;
    try {
      port.postMessage({ k, summary: flexibleClaimSummary(ctx, task.claims[k]!, task.k, task.test) } satisfies SiteClaimReply);
    } catch {
      // left to the main thread
    }
  }
  port.postMessage({ done: true } satisfies SiteClaimReply);
}
