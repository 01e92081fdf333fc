/**
 * Disclosure checks of site summaries (`siteSummary.ts`, `siteRegressionScore.ts`) on a site's
 * kept rows: a claim's complete cases, their number, and rule 4 (a level of a categorical
 * variable, or a pair of levels of two, held by 1 … k − 1 of them), from per-pattern counts so
 * that a summary of many claims does not read the rows once per claim.
 */
import type { Claim } from "./types.js";
import type { Column, Table } from "../data/Table.js";
import { CATEGORICAL_TYPES } from "../data/Table.js";

/**
 * The kept rows' missing-data patterns (over the table's columns, the measured variables) and,
 * built when first asked, each categorical variable's level counts and each pair's level-pair
 * counts per pattern, so that a claim's complete cases and the counts of rule 4 cost O(patterns)
 * rather than a pass over the rows per claim.
 */
interface SitePatterns {
  /** Pattern of each row (dense, in order of first appearance). */
  ids: Int32Array;
  count: number;
  /** Rows per pattern. */
  sizes: Float64Array;
  /** Per variable, per pattern: 1 where the variable is observed. */
  observed: Map<string, Uint8Array>;
  levels: Map<string, Float64Array>;
  pairs: Map<string, Float64Array | null>;
}

/** Most cells (patterns × level pairs) a pair's per-pattern counts may hold; beyond it the rows are read. */
const MAX_PAIR_CELLS = 1 << 22;

const patternMemo = new WeakMap<Table, SitePatterns>();

/** The patterns of {@link SitePatterns} for a table (memoised). Cost: O(rows · m) once. */
function patternsOf(table: Table): SitePatterns {
  let pats = patternMemo.get(table);
  if (pats) return pats;
  const ids = new Int32Array(table.rows);
  let count = 1;
  let lookup = new Int32Array(2);
  for (const c of table.columns) {
    lookup = lookup.length >= 2 * count ? lookup : new Int32Array(2 * count);
    lookup.fill(-1, 0, 2 * count);
    let next = 0;
    const v = c.values;
    for (let r = 0; r < table.rows; r++) {
      const key = 2 * ids[r]! + (Number.isNaN(v[r]!) ? 0 : 1);
      let id = lookup[key]!;
      if (id < 0) lookup[key] = id = next++;
      ids[r] = id;
    }
    count = Math.max(1, next);
  }
  const sizes = new Float64Array(count);
  const first = new Int32Array(count).fill(-1);
  for (let r = 0; r < table.rows; r++) {
    sizes[ids[r]!]++;
    if (first[ids[r]!] === -1) first[ids[r]!] = r;
  }
  const observed = new Map<string, Uint8Array>();
  for (const c of table.columns) observed.set(c.name, Uint8Array.from(first, (r) => (r >= 0 && !Number.isNaN(c.values[r]!) ? 1 : 0)));
  pats = { ids, count, sizes, observed, levels: new Map(), pairs: new Map() };
  patternMemo.set(table, pats);
  return pats;
}

/** Per pattern, 1 where every one of the variables is observed. Cost: O(patterns · variables). */
function completePatterns(pats: SitePatterns, vars: readonly string[]): Uint8Array {
  const ok = new Uint8Array(pats.count).fill(1);
  for (const v of vars) {
    const o = pats.observed.get(v)!;
    for (let p = 0; p < pats.count; p++) ok[p] &= o[p]!;
  }
  return ok;
}

/** The complete cases of a claim's variables among the kept rows. Cost: O(rows) after the patterns. */
export function completeRows(table: Table, claim: Claim): Int32Array {
  const pats = patternsOf(table);
  const ok = completePatterns(pats, [claim.x, claim.y, ...claim.given]);
  const n = rowsIn(pats, ok);
  const rows = new Int32Array(n);
  const ids = pats.ids;
  for (let r = 0, j = 0; j < n; r++) if (ok[ids[r]!]) rows[j++] = r;
  return rows;
}

/** The number of a claim's complete cases among the kept rows. Cost: O(patterns · (2 + |S|)). */
export function completeCount(table: Table, claim: Claim): number {
  const pats = patternsOf(table);
  return rowsIn(pats, completePatterns(pats, [claim.x, claim.y, ...claim.given]));
}

/** The rows of the patterns marked in `ok`. Cost: O(patterns). */
function rowsIn(pats: SitePatterns, ok: Uint8Array): number {
  let n = 0;
  for (let p = 0; p < pats.count; p++) if (ok[p]) n += pats.sizes[p]!;
  return n;
}

/** A categorical column's level counts per pattern (patterns × levels). Cost: O(rows) once. */
function levelCountsOf(table: Table, pats: SitePatterns, c: Column): Float64Array {
  let out = pats.levels.get(c.name);
  if (!out) {
    const L = c.levels!.length;
    out = new Float64Array(pats.count * L);
    const codes = c.codes!;
    for (let r = 0; r < table.rows; r++) if (codes[r]! >= 0) out[pats.ids[r]! * L + codes[r]!]++;
    pats.levels.set(c.name, out);
  }
  return out;
}

/** Two categorical columns' level-pair counts per pattern (patterns × La·Lb), or null when too large to keep. Cost: O(rows) once. */
function pairCountsOf(table: Table, pats: SitePatterns, a: Column, b: Column): Float64Array | null {
  const key = `${a.name}\u0000${b.name}`;
  let out = pats.pairs.get(key);
  if (out === undefined) {
    const La = a.levels!.length;
    const Lb = b.levels!.length;
    if (pats.count * La * Lb > MAX_PAIR_CELLS) out = null;
    else {
      out = new Float64Array(pats.count * La * Lb);
      const ac = a.codes!;
      const bc = b.codes!;
      for (let r = 0; r < table.rows; r++) if (ac[r]! >= 0 && bc[r]! >= 0) out[(pats.ids[r]! * La + ac[r]!) * Lb + bc[r]!]++;
    }
    pats.pairs.set(key, out);
  }
  return out;
}

/**
 * Rule 4 for a linear, flexible or score claim: the first level of a categorical variable of the claim (x, y or a
 * member of S), or combination of levels of two of them, held by 1 … k − 1 of the claim's
 * complete cases, in words; undefined when there is none. The means and cross-products of a
 * level's indicator (or of a binary score) are sums over that level's rows, so a level of fewer
 * than k rows would be a moment from fewer than k rows. Cost: O(P · c² · L²) for P patterns and c
 * categorical variables of at most L levels, from the per-pattern counts ({@link SitePatterns}).
 */
export function smallCategoricalCell(table: Table, claim: Claim, k: number): string | undefined {
  const cats = [...new Set([claim.x, claim.y, ...claim.given])].map((v) => table.column(v)!).filter((c) => CATEGORICAL_TYPES.has(c.type) && c.codes);
  if (cats.length === 0) return undefined;
  const pats = patternsOf(table);
  const ok = completePatterns(pats, [claim.x, claim.y, ...claim.given]);
  const plural = (count: number) => `${count} row${count === 1 ? "" : "s"}`;
  // the claim's complete cases are the rows of its complete patterns: sum the per-pattern counts
  const sumOver = (perPattern: Float64Array, width: number): Float64Array => {
    const counts = new Float64Array(width);
    for (let p = 0; p < pats.count; p++) {
      if (!ok[p]) continue;
      const at = p * width;
      for (let j = 0; j < width; j++) counts[j] += perPattern[at + j]!;
    }
    return counts;
  };
  for (const c of cats) {
    const counts = sumOver(levelCountsOf(table, pats, c), c.levels!.length);
    const code = counts.findIndex((count) => count > 0 && count < k);
    if (code >= 0) return `the level ${JSON.stringify(c.levels![code])} of "${c.name}" has ${plural(counts[code]!)}`;
  }
  let rows: Int32Array | undefined;
  for (let i = 0; i < cats.length; i++) {
    for (let j = i + 1; j < cats.length; j++) {
      const a = cats[i]!;
      const b = cats[j]!;
      const L = b.levels!.length;
      const width = a.levels!.length * L;
      const kept = pairCountsOf(table, pats, a, b);
      let counts: Float64Array;
      if (kept) counts = sumOver(kept, width);
      else {
        rows ??= completeRows(table, claim);
        counts = new Float64Array(width);
        const ac = a.codes!;
        const bc = b.codes!;
        for (const r of rows) counts[ac[r]! * L + bc[r]!]++;
      }
      const key = counts.findIndex((count) => count > 0 && count < k);
      if (key >= 0) return `"${a.name}" = ${JSON.stringify(a.levels![Math.floor(key / L)])} with "${b.name}" = ${JSON.stringify(b.levels![key % L])} has ${plural(counts[key]!)}`;
    }
  }
  return undefined;
}
