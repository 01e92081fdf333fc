/**
 * Reading a site summary file (`siteSummary.ts` writes them): the format tag and version, and the
 * shape of every field of every claim, each failure an input error naming the file and the field.
 * Kept apart from the pooled tests (`poolSiteSummaries.ts`) and free of the statistics, so that a
 * helper thread can read summaries without loading them.
 */
import { InputError } from "../errors.js";
import type { SiteSummary } from "./siteSummary.js";
import type { ScoreClaimSummary } from "./siteRegressionScore.js";
import { SITE_SUMMARY_FORMAT, SITE_SUMMARY_VERSION } from "./siteSummaryFormat.js";

/** A site summary with the file it was read from (for messages). */
export interface SiteSummaryFile {
  file: string;
  summary: SiteSummary;
}

function fail(file: string, what: string): never {
  throw new InputError(`${file}: ${what}`, { file });
}

// The shape checks run on every number of every summary (about 150,000 a 2 MB file), so they are plain loops.
export function isNumberArray(v: unknown): v is number[] {
  if (!Array.isArray(v)) return false;
  for (let i = 0; i < v.length; i++) {
    const x: unknown = v[i];
    if (typeof x !== "number" || !Number.isFinite(x)) return false;
  }
  return true;
}
function isStringArray(v: unknown): v is string[] {
  if (!Array.isArray(v)) return false;
  for (let i = 0; i < v.length; i++) if (typeof v[i] !== "string") return false;
  return true;
}

/**
 * Read and check a site summary's JSON text: the format tag and version, and the shape of every
 * field (a wrong or truncated file is an input error naming the field and what to do).
 * Cost: O(size of the text).
 * @throws InputError naming the file and the field
 * @example parseSiteSummary(text, "site-a.json").site // "A"
 */
export function parseSiteSummary(text: string, file: string): SiteSummary {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    fail(file, `is not valid JSON (${(e as Error).message}); give the file that arrowaudit summarize wrote, unchanged`);
  }
  const o = doc as Record<string, unknown>;
  if (typeof o !== "object" || o === null || o.format !== SITE_SUMMARY_FORMAT) fail(file, `is not a site summary (no "format": "${SITE_SUMMARY_FORMAT}"); write one with arrowaudit summarize`);
  if (o.version !== SITE_SUMMARY_VERSION) {
    const why = o.version === 1 ? " (version 1 held the linear test's moments for claims with a continuous variable, which are now pooled by the flexible test from residual sums)" : "";
    fail(file, `is a site summary of version ${JSON.stringify(o.version)}, and this arrowaudit reads version ${SITE_SUMMARY_VERSION}${why}; summarize every site again with this version`);
  }
  const bad = (field: string, want: string): never => fail(file, `field "${field}" must be ${want}; summarize the site again rather than editing the file`);
  if (typeof o.graph_sha256 !== "string" || !/^[0-9a-f]{64}$/.test(o.graph_sha256)) bad("graph_sha256", "64 hexadecimal digits");
  if (typeof o.site !== "string" || o.site === "") bad("site", "a non-empty text");
  if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 0) bad("n", "a whole number");
  const st = o.settings as Record<string, unknown> | undefined;
  if (typeof st !== "object" || st === null) bad("settings", "an object");
  if (!["union-parents", "minimal", "all-minimal"].includes(st!.sets as string)) bad("settings.sets", "union-parents, minimal or all-minimal");
  if (!["auto", "linear", "chisq", "rank", "regression"].includes(st!.method as string)) bad("settings.method", "auto, linear, chisq, rank or regression");
  if (typeof st!.listwise !== "boolean") bad("settings.listwise", "true or false");
  if (typeof st!.min_cell !== "number" || !Number.isInteger(st!.min_cell)) bad("settings.min_cell", "a whole number");
  if (!isStringArray(st!.unmeasured)) bad("settings.unmeasured", "a list of names");
  if (!Array.isArray(o.variables) || !o.variables.every((v) => typeof v?.name === "string" && typeof v?.type === "string" && (v.levels === undefined || isStringArray(v.levels)))) bad("variables", "a list of { name, type, levels }");
  if (!Array.isArray(o.claims)) bad("claims", "a list");
  (o.claims as unknown[]).forEach((c, i) => checkClaim(c, i, bad));
  return o as unknown as SiteSummary;
}

function checkClaim(c: unknown, i: number, bad: (field: string, want: string) => never): void {
  const o = c as Record<string, unknown>;
  const f = `claims[${i}]`;
  if (typeof o !== "object" || o === null || typeof o.x !== "string" || typeof o.y !== "string" || !isStringArray(o.given)) bad(f, "a claim with x, y and given");
  if (o.kind === "untestable") {
    if (typeof o.reason !== "string") bad(`${f}.reason`, "a text");
  } else if (o.kind === "moments") {
    if (!isStringArray(o.columns) || o.columns.length < 2) bad(`${f}.columns`, "a list of at least two names");
    const d = (o.columns as string[]).length;
    if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 1) bad(`${f}.n`, "a whole number above 0");
    if (!isNumberArray(o.means) || o.means.length !== d) bad(`${f}.means`, `${d} finite numbers`);
    if (!Array.isArray(o.cross_products) || o.cross_products.length !== d || !o.cross_products.every((r) => isNumberArray(r) && r.length === d)) bad(`${f}.cross_products`, `a ${d} × ${d} matrix of finite numbers`);
  } else if (o.kind === "tables") {
    if (typeof o.n !== "number" || !Number.isInteger(o.n) || o.n < 0) bad(`${f}.n`, "a whole number");
    if (!Array.isArray(o.strata) || !o.strata.every((s) => isStringArray(s?.given) && Array.isArray(s?.counts) && s.counts.every((r: unknown) => isNumberArray(r) && r.every((v) => Number.isInteger(v) && v >= 0)))) bad(`${f}.strata`, "a list of { given, counts } with whole counts");
    const dr = o.dropped as Record<string, unknown> | undefined;
    if (typeof dr !== "object" || dr === null || typeof dr.strata !== "number" || typeof dr.rows !== "number") bad(`${f}.dropped`, "{ strata, rows }");
  } else if (o.kind === "residuals") {
    checkResidualsClaim(o, f, bad);
  } else if (o.kind === "score") {
    checkScoreClaimShape(o, f, bad);
  } else bad(`${f}.kind`, "moments, tables, residuals, score or untestable");
}

function isMatrix(v: unknown, d: number): boolean {
  if (!Array.isArray(v) || v.length !== d) return false;
  for (let i = 0; i < d; i++) {
    const r: unknown = v[i];
    if (!isNumberArray(r) || r.length !== d) return false;
  }
  return true;
}
const isCount = (v: unknown, least = 0): boolean => typeof v === "number" && Number.isInteger(v) && v >= least;

export const FOURTH_ORDER_KEYS = ["uu", "vv", "uv", "uuvv", "uuuv", "uvvv", "uuuu", "vvvv"] as const;
const FLEXIBILITY_KEYS = ["level", "max_level", "level_x", "level_y", "parameters"] as const;

/** The fields of a residuals claim (see `ResidualsClaimSummary`): shapes from its side columns. */
function checkResidualsClaim(o: Record<string, unknown>, f: string, bad: (field: string, want: string) => never): void {
  if (o.test !== "gcm" && o.test !== "gcm-rank") bad(`${f}.test`, '"gcm" or "gcm-rank"');
  if (!isCount(o.n, 1)) bad(`${f}.n`, "a whole number above 0");
  if (!isCount(o.params)) bad(`${f}.params`, "a whole number");
  const sides = o.sides as unknown[];
  if (!Array.isArray(sides) || sides.length !== 2 || !sides.every((s) => isStringArray(s) && s.length > 0)) bad(`${f}.sides`, "two non-empty lists of column names");
  const [qx, qy] = [(sides[0] as string[]).length, (sides[1] as string[]).length];
  if (!isMatrix(o.residual_cross_products, qx + qy)) bad(`${f}.residual_cross_products`, `a ${qx + qy} × ${qx + qy} matrix of finite numbers`);
  if (!isMatrix(o.product_variance, qx * qy)) bad(`${f}.product_variance`, `a ${qx * qy} × ${qx * qy} matrix of finite numbers`);
  const fo = o.fourth_order as Record<string, unknown> | undefined;
  if (fo !== undefined && (typeof fo !== "object" || fo === null || !FOURTH_ORDER_KEYS.every((k) => typeof fo[k] === "number" && Number.isFinite(fo[k])))) bad(`${f}.fourth_order`, `an object of the finite sums ${FOURTH_ORDER_KEYS.join(", ")}`);
  const lin = o.linear as Record<string, unknown> | undefined;
  if (typeof lin !== "object" || lin === null || !isCount(lin.params) || !isMatrix(lin.residual_cross_products, qx + qy)) bad(`${f}.linear`, `{ params, residual_cross_products: a ${qx + qy} × ${qx + qy} matrix }`);
  const fl = o.flexibility as Record<string, unknown> | undefined;
  if (typeof fl !== "object" || fl === null || !FLEXIBILITY_KEYS.every((k) => isCount(fl[k]))) bad(`${f}.flexibility`, "{ level, max_level, level_x, level_y, parameters } as whole numbers");
  if (!Array.isArray(o.adjustment) || !o.adjustment.every((a) => typeof a?.variable === "string" && typeof a?.entered === "string")) bad(`${f}.adjustment`, "a list of { variable, entered, columns }");
  if (!isCount(o.aliased)) bad(`${f}.aliased`, "a whole number");
}

const isFiniteNumber = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);
const isNumberList = (v: unknown, len: number): v is number[] => isNumberArray(v) && v.length === len;

/**
 * Check the shape of a score claim read from a summary file (`kind: "score"`), calling
 * `bad(field, want)` (which throws, naming the file) at the first field that is wrong, as the
 * other kinds are checked in `parseSiteSummary`. `f` is the claim's field name, e.g. "claims[3]".
 * Cost: O(a²) for a added parameters.
 * @throws whatever `bad` throws
 * @example checkScoreClaimShape(JSON.parse(text).claims[0], "claims[0]", bad)
 */
export function checkScoreClaimShape(c: unknown, f: string, bad: (field: string, want: string) => never): asserts c is ScoreClaimSummary {
  const o = c as Record<string, unknown>;
  if (typeof o !== "object" || o === null || typeof o.x !== "string" || typeof o.y !== "string" || !isStringArray(o.given)) bad(f, "a claim with x, y and given");
  if (o.kind !== "score") bad(`${f}.kind`, `"score"`);
  if (!Number.isInteger(o.n) || !((o.n as number) >= 1)) bad(`${f}.n`, "a whole number above 0");
  if (o.response !== o.x && o.response !== o.y) bad(`${f}.response`, `the claim's x or y ("${o.x}" or "${o.y}")`);
  if (o.model !== "logistic" && o.model !== "multinomial") bad(`${f}.model`, "logistic or multinomial");
  if (!isStringArray(o.added_columns) || o.added_columns.length < 1) bad(`${f}.added_columns`, "a list of at least one name");
  const a = (o.added_columns as string[]).length;
  if (!isNumberList(o.score, a)) bad(`${f}.score`, `${a} finite numbers`);
  if (!Array.isArray(o.information) || o.information.length !== a || !o.information.every((r) => isNumberList(r, a))) bad(`${f}.information`, `a ${a} × ${a} matrix of finite numbers`);
  const I = o.information as number[][];
  for (let r = 0; r < a; r++) {
    if (!(I[r]![r]! >= 0)) bad(`${f}.information`, "a matrix with no negative diagonal entry");
    for (let s = r + 1; s < a; s++) if (Math.abs(I[r]![s]! - I[s]![r]!) > 1e-9 * (Math.abs(I[r]![s]!) + Math.sqrt(I[r]![r]! * I[s]![s]!)) + 1e-300) bad(`${f}.information`, "a symmetric matrix");
  }
  if (o.site_lr !== undefined) {
    const s = o.site_lr as Record<string, unknown>;
    if (typeof s !== "object" || s === null || !isFiniteNumber(s.l0) || !isFiniteNumber(s.l1) || !isFiniteNumber(s.lr) || !Number.isInteger(s.df)) bad(`${f}.site_lr`, "{ l0, l1, lr, df } with finite numbers and a whole df");
  }
  if (o.notes !== undefined && !isStringArray(o.notes)) bad(`${f}.notes`, "a list of texts");
}

