/**
 * The helper thread of {@link runAuditParallel}: a worker that tests the claims which read the
 * rows, taking them one at a time from the counter it shares with the main thread.
 * The table's columns travel by structured clone: columns in shared memory (as the two-thread
 * reader leaves them) are shared, not copied; only the columns the claims use are sent.
 */
import type { ClaimHelper, HelperJob } from "../src/audit/runAudit.js";
import type { MethodResult } from "../src/audit/TestMethod.js";
import type { AuditSettings, Claim } from "../src/audit/types.js";
import type { Column } from "../src/data/Table.js";
import { startWorker } from "./startWorker.js";
import type { ClaimSummary, SiteClaimHelper } from "../src/audit/siteSummary.js";
import type { PatternMomentsOptions } from "../src/data/buildPatternMoments.js";

/** What the main thread hands to the worker (see claimWorker.ts). */
export interface ClaimTask {
  file?: string;
  rows: number;
  columns: Column[];
  claims: readonly Claim[];
  counter: Int32Array;
  settings: AuditSettings;
  rowFilter?: Uint8Array;
  decisionFloor: number;
}

/** A message from the worker: one claim's result (by index in the job), or the end. */
export type ClaimReply = { k: number; result: MethodResult } | { done: true };

/**
 * Start a worker on `job`; resolves with the results it posted, by index (a failed or crashed
 * worker resolves with what it finished: the caller tests the rest). Cost: one thread start and
 * the worker's share of the claims.
 */
export const claimHelper: ClaimHelper = (job: HelperJob, onResult: () => void) => {
  const names = new Set<string>();
  for (const c of job.claims) for (const v of [c.x, c.y, ...c.given]) names.add(v);
  const columns = [...names].map((n) => plainColumn(job.table.column(n)!));
  const task: ClaimTask = {
    ...(job.table.file !== undefined ? { file: job.table.file } : {}),
    rows: job.table.rows,
    columns,
    claims: job.claims,
    counter: job.counter,
    settings: job.settings,
    decisionFloor: job.decisionFloor,
    ...(job.rowFilter ? { rowFilter: job.rowFilter } : {}),
  };
  const results = new Map<number, MethodResult>();
  return runClaimWorker({ kind: "claims", task }, (m: ClaimReply) => {
    if ("done" in m) return true;
    results.set(m.k, m.result);
    onResult();
    return false;
  }).then(() => results);
};

/**
 * Start claimWorker.ts on `workerData` and pass each message to `onMessage` until it returns true
 * (the worker's last message); resolves then, or when the worker fails, exits or cannot start
 * (the caller keeps what it received). Cost: one thread start.
 */
function runClaimWorker<M>(workerData: unknown, onMessage: (m: M) => boolean): Promise<void> {
  return new Promise((resolve) => {
    let worker: ReturnType<typeof startWorker>;
    try {
      worker = startWorker(import.meta.url, "claimWorker", workerData);
    } catch {
      resolve();
      return;
    }
    const end = () => {
      void worker.terminate();
      resolve();
    };
    worker.on("message", (m: M) => {
      if (onMessage(m)) end();
    });
    worker.once("error", end);
    worker.once("exit", () => resolve());
  });
}

/** A column as a plain object (structured clone keeps its typed arrays, sharing shared ones). */
function plainColumn(c: Column): Column {
  return {
    name: c.name,
    type: c.type,
    typeSource: c.typeSource,
    values: c.values,
    ...(c.codes ? { codes: c.codes } : {}),
    ...(c.levels ? { levels: [...c.levels] } : {}),
    missing: c.missing,
  };
}

/** What the main thread hands to a site-summary worker (see claimWorker.ts). */
export interface SiteClaimTask {
  file?: string;
  rows: number;
  columns: Column[];
  claims: readonly Claim[];
  counter: Int32Array;
  k: number;
  test: "gcm" | "gcm-rank";
  /** On the moment path: what the pattern moments are built over (the worker builds the same ones). */
  moments?: PatternMomentsOptions;
}

/** A message from a site-summary worker: one claim's summary (by index in the job), or the end. */
export type SiteClaimReply = { k: number; summary: ClaimSummary } | { done: true };

/**
 * The helper thread of `summarize` (`summarizeSiteWith`): a worker that makes flexible claims'
 * summaries (building the site's pattern moments for itself on the moment path), taking them
 * from the counter it shares with the main thread. Resolves with what it finished (a failed worker leaves the rest to the caller).
 */
export const siteClaimHelper: SiteClaimHelper = (job) => {
  // on the moment path every measured column (the moments are built over them all), else the claims' columns
  const names = new Set<string>(job.moments ? job.table.columns.map((c) => c.name) : []);
  for (const c of job.claims) for (const v of [c.x, c.y, ...c.given]) names.add(v);
  const task: SiteClaimTask = {
    ...(job.table.file !== undefined ? { file: job.table.file } : {}),
    rows: job.table.rows,
    columns: [...names].map((n) => plainColumn(job.table.column(n)!)),
    claims: job.claims,
    counter: job.counter,
    k: job.k,
    test: job.test,
    ...(job.moments ? { moments: job.moments } : {}),
  };
  const results = new Map<number, ClaimSummary>();
  return runClaimWorker({ kind: "siteClaims", task }, (m: SiteClaimReply) => {
    if ("done" in m) return true;
    results.set(m.k, m.summary);
    return false;
  }).then(() => results);
};
