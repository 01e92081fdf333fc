/**
 * A saved `arrowaudit test --json` result, read back for `draw --results`: parsed, and its claims
 * checked against their documented shape (`TestedClaim` in src/audit/types.ts) before anything is
 * drawn, so that a hand-edited or truncated file gets a message saying what is wrong and where
 * rather than a crash or a drawing labelled "undefined".
 */
import type { AuditResult, TestedClaim, TestName } from "../src/audit/types.js";
import { InputError } from "../src/errors.js";

/** Every test name a result may hold (the compiler checks the list against `TestName`). */
const TEST_NAMES: Record<TestName, true> = {
  gcm: true,
  "gcm-rank": true,
  "pearson-partial": true,
  "stratified-chisq": true,
  "linear-by-linear": true,
  "regression-lr": true,
};

const CLAIM_SHAPE = "an object with x, y, given, test, effect, ci, verdict, rank";
const SAVE = "save a result with `arrowaudit test --json > result.json`";

/** A JSON value in a few words, for messages. */
function describe(v: unknown): string {
  if (v === undefined) return "missing";
  if (v === null) return "null";
  if (Array.isArray(v)) return `a list of ${v.length}`;
  if (typeof v === "string") return v.length > 40 ? `${JSON.stringify(v.slice(0, 37))}…` : JSON.stringify(v);
  if (typeof v === "object") return "an object";
  return String(v);
}

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);
const isFiniteNumber = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

/** What is wrong with claim `c` (at `where`), or undefined when it has the documented shape. */
function claimProblem(c: unknown, where: string): string | undefined {
  if (!isObject(c)) return `${where} is ${describe(c)}; expected ${CLAIM_SHAPE}`;
  const field = (k: string, expected: string) => `${where}.${k} is ${describe(c[k])}; expected ${expected}`;
  if (typeof c.x !== "string" || c.x === "") return field("x", "a node name");
  if (typeof c.y !== "string" || c.y === "") return field("y", "a node name");
  if (!Array.isArray(c.given)) return field("given", "a list of node names (empty for none)");
  const bad = c.given.findIndex((g) => typeof g !== "string" || g === "");
  if (bad >= 0) return `${where}.given[${bad}] is ${describe(c.given[bad])}; expected a node name`;
  if (typeof c.test !== "string" || !Object.hasOwn(TEST_NAMES, c.test)) return field("test", `one of ${Object.keys(TEST_NAMES).join(", ")}`);
  if (!isFiniteNumber(c.effect) || Math.abs(c.effect) > 1) return field("effect", "a number from -1 to 1");
  if (!Array.isArray(c.ci) || c.ci.length !== 2 || !c.ci.every(isFiniteNumber) || c.ci[0] > c.ci[1]) {
    return field("ci", "two numbers [lower, upper], lower first");
  }
  if (c.verdict !== "contradicted" && c.verdict !== "consistent") return field("verdict", '"contradicted" or "consistent"');
  if (typeof c.rank !== "number" || !Number.isInteger(c.rank) || c.rank < 1) return field("rank", "a whole number from 1");
  if (c.details !== undefined && !isObject(c.details)) return field("details", "an object, or no details");
  return undefined;
}

/**
 * Parse the text of a saved `test --json` result and check every claim's shape: x, y and given
 * (node names), test (a known test), effect (from −1 to 1), ci (lower ≤ upper), verdict and rank
 * (a whole number from 1). Only `claims` is read by the drawing, so only it is checked.
 * Cost: O(size of the document).
 * @throws InputError naming the file, the first wrong field's place (`claims[3].ci`), what it is
 *   and what was expected
 * @example parseResults('{"claims":[null]}', "r.json") // throws: "r.json: claims[0] is null; expected an object with x, y, given, test, effect, ci, verdict, rank"
 */
export function parseResults(text: string, file: string): Pick<AuditResult, "claims"> {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new InputError(`${file}: not a JSON document (${(e as Error).message}); ${SAVE}`, { file });
  }
  if (!isObject(doc)) throw new InputError(`${file}: the document is ${describe(doc)}; expected an object with a "claims" list; ${SAVE}`, { file });
  if (!Array.isArray(doc.claims)) throw new InputError(`${file}: "claims" is ${describe(doc.claims)}; expected a list of claims; ${SAVE}`, { file });
  for (let i = 0; i < doc.claims.length; i++) {
    const problem = claimProblem(doc.claims[i], `claims[${i}]`);
    if (problem !== undefined) throw new InputError(`${file}: ${problem}`, { file });
  }
  return { claims: doc.claims as TestedClaim[] };
}
