/**
 * Worker thread of {@link parallelPatternMoments}: waits for one row range of a pattern-moments
 * plan, accumulates its per-pattern sums and cross-products, and posts them back
 * (`{ ok: false }` when anything fails; the main thread then accumulates the range itself).
 */
import { parentPort, workerData } from "node:worker_threads";
import { accumulatePatternRange, type PatternPart, type PatternPass } from "../src/data/buildPatternMoments.js";

/** What the main thread posts: the plan's row pass and the range to accumulate. */
export interface MomentsTask {
  pass: PatternPass;
  from: number;
  to: number;
}

/** What the worker posts back. */
export type MomentsReply = { ok: true; part: PatternPart } | { ok: false };

if (parentPort && workerData && (workerData as { kind?: string }).kind === "patternMoments") {
  const port = parentPort;
  port.once("message", (task: MomentsTask) => {
    let reply: MomentsReply;
    try {
      reply = { ok: true, part: accumulatePatternRange(task.pass, task.from, task.to) };
    } catch {
      reply = { ok: false };
    }
    port.postMessage(reply);
  });
}
