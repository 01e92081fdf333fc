/**
 * The `claims --json` document written as the claims are derived, in pieces, so that a graph
 * with millions of missing arrows never becomes one string (V8 strings stop at about 2²⁹
 * characters) nor one list in memory. The text is exactly `JSON.stringify(doc, null, 2) + "\n"`
 * (ECMA-262 JSON.stringify with an indent of two spaces), which a test checks.
 */
import type { Claim, UntestableClaim } from "../src/audit/types.js";
import type { ClaimEntry } from "../src/graph/deriveClaims.js";

/** Characters gathered before each write (writes are system calls). */
const CHUNK = 1 << 16;

/** A buffered writer of text in pieces of about `CHUNK` characters. */
export function chunkedWriter(write: (s: string) => void): { put: (s: string) => void; flush: () => void } {
  let buf = "";
  return {
    put(s) {
      buf += s;
      if (buf.length >= CHUNK) {
        write(buf);
        buf = "";
      }
    },
    flush() {
      if (buf !== "") write(buf);
      buf = "";
    },
  };
}

/** `JSON.stringify(value, null, 2)` for a value nested `depth` levels deep (each line after the first indented). */
function nested(value: unknown, depth: number): string {
  return JSON.stringify(value, null, 2).replace(/\n/g, "\n" + "  ".repeat(depth));
}

/**
 * A claim as an element of the claims list (`nested(c, 2)`), written directly when it has the
 * usual shape { x, y, given } (five times faster than JSON.stringify with an indent), else by
 * `nested`. JSON.stringify(s) of a string is its JSON text in either case.
 */
function claimText(c: Claim): string {
  const keys = Object.keys(c);
  if (keys.length !== 3 || keys[0] !== "x" || keys[1] !== "y" || keys[2] !== "given" || !Array.isArray(c.given)) return nested(c, 2);
  let given = "[]";
  if (c.given.length > 0) {
    given = "[";
    for (let i = 0; i < c.given.length; i++) given += `${i === 0 ? "" : ","}\n        ${JSON.stringify(c.given[i])}`;
    given += "\n      ]";
  }
  return `{\n      "x": ${JSON.stringify(c.x)},\n      "y": ${JSON.stringify(c.y)},\n      "given": ${given}\n    }`;
}

/** What is known once every entry has been derived, for the keys written after the lists. */
export interface ClaimsTotals {
  claims: number;
  untestable: number;
  truncatedPairs: number;
}

/**
 * Write `{ ...head, claims, untestable, ...tail(totals) }` as `JSON.stringify(doc, null, 2) + "\n"`,
 * taking the claims from `entries` as they come. Untestable entries are kept until the claims are
 * written (they follow them in the document); claims are not kept. Returns the totals.
 * Memory: O(untestable entries + one chunk). Cost: O(output length).
 * @example writeClaimsJson(io.stdout, { graph }, claimEntries(graph), (t) => ({})) // the document of `claims --json`
 */
export function writeClaimsJson(
  write: (s: string) => void,
  head: Record<string, unknown>,
  entries: Iterator<ClaimEntry, { truncatedPairs: number }>,
  tail: (totals: ClaimsTotals) => Record<string, unknown>,
): ClaimsTotals {
  // Derive the first entry before writing anything, so that an error leaves stdout empty.
  let next = entries.next();
  const out = chunkedWriter(write);
  const key = (k: string) => `  ${JSON.stringify(k)}: `;
  const fields = Object.entries(head).filter(([, v]) => v !== undefined);
  out.put("{");
  fields.forEach(([k, v], i) => out.put(`${i === 0 ? "\n" : ",\n"}${key(k)}${nested(v, 1)}`));
  out.put(`${fields.length === 0 ? "\n" : ",\n"}${key("claims")}[`);
  const untestable: UntestableClaim[] = [];
  let claims = 0;
  for (; !next.done; next = entries.next()) {
    if (next.value.kind === "untestable") {
      untestable.push(next.value.untestable);
      continue;
    }
    const c: Claim = next.value.claim;
    out.put(`${claims === 0 ? "\n" : ",\n"}    ${claimText(c)}`);
    claims++;
  }
  out.put(claims === 0 ? "]" : "\n  ]");
  out.put(`,\n${key("untestable")}${nested(untestable, 1)}`);
  const totals: ClaimsTotals = { claims, untestable: untestable.length, truncatedPairs: next.value.truncatedPairs };
  for (const [k, v] of Object.entries(tail(totals))) if (v !== undefined) out.put(`,\n${key(k)}${nested(v, 1)}`);
  out.put("\n}\n");
  out.flush();
  return totals;
}
