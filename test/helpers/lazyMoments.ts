/**
 * Pattern moments of every column of a table, built on first use: for method tests whose linear
 * models read the moments while their table tests do not (building them costs a pass over rows).
 */
import { buildPatternMoments } from "../../src/data/buildPatternMoments.js";
import type { PatternMoments } from "../../src/data/Moments.js";
import type { Table } from "../../src/data/Table.js";

export function lazyMoments(t: Table): PatternMoments {
  let built: PatternMoments | undefined;
  const all = () => (built ??= buildPatternMoments(t, { variables: t.columns.map((c) => c.name) }));
  return new Proxy({} as PatternMoments, {
    get(_, key) {
      const m = all();
      const v = Reflect.get(m, key) as unknown;
      return typeof v === "function" ? (v as (...a: unknown[]) => unknown).bind(m) : v;
    },
  });
}
