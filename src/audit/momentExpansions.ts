/**
 * Which further design columns an audit's pattern moments must hold for its claims' methods
 * (see `MomentExpansions` in data/buildPatternMoments.ts): the indicators of ordinal members of
 * conditioning sets, the flexible basis of continuous members of the default test's sets (large
 * tables only, to the level a compute budget allows) and mid-rank columns for `--method rank`.
 */
import type { MomentExpansions } from "../data/buildPatternMoments.js";
import type { Table } from "../data/Table.js";
import type { VariableBasis } from "../stats/flexibleBasis.js";
import { columnBasis, usesRowPath, varianceSample } from "./methods/gcm.js";
import { chooseMethod } from "./methods/index.js";
import type { AuditSettings, Claim } from "./types.js";

/** Most multiply-adds of the pattern moments' cross-products (rows · D²/2) that basis columns may bring them to. */
export const BASIS_COMPUTE_BUDGET = 1.2e10;
/** Highest level of the flexible basis kept in the pattern moments (the row path goes further). */
export const MAX_MOMENT_BASIS_LEVEL = 3;

/**
 * The further design columns the claims' methods read from the pattern moments: indicators of
 * the ordinal members of conditioning sets (every moment-based method: categorical members
 * enter as indicators, never as scores), the flexible basis of the continuous members of the
 * sets of `gcm` claims up to the highest level within BASIS_COMPUTE_BUDGET (only when those
 * claims take the moment path), and mid-rank columns of the sides of `gcm-rank` claims.
 * Cost: O(claims · k) plus the sorting of each continuous member once.
 */
export function momentExpansions(claims: readonly Claim[], table: Table, settings: AuditSettings, variables: readonly string[], rowFilter?: Uint8Array): MomentExpansions {
  const indicators = new Set<string>();
  const ranks = new Set<string>();
  const flexible = new Set<string>();
  for (const claim of claims) {
    const types = { x: table.column(claim.x)!.type, y: table.column(claim.y)!.type, given: claim.given.map((g) => table.column(g)!.type) };
    const method = chooseMethod(settings.method, types).name;
    if (method === "stratified-chisq" || method === "linear-by-linear") continue;
    for (const g of claim.given) {
      const col = table.column(g)!;
      if (col.type === "ordinal") indicators.add(g);
      if (col.type === "continuous" && (method === "gcm" || method === "gcm-rank")) flexible.add(g);
    }
    if (method === "gcm-rank") for (const v of [claim.x, claim.y]) if (table.column(v)!.type !== "nominal") ranks.add(v);
  }
  const basis = new Map<string, VariableBasis>();
  if (flexible.size > 0 && !usesRowPath(table, rowFilter)) {
    const sample = varianceSample(table, settings.seed, rowFilter);
    const bases = [...flexible].map((v) => [v, columnBasis(table.column(v)!, sample)] as const);
    let base = 0;
    for (const name of variables) {
      const c = table.column(name)!;
      if (c.type === "nominal") base += Math.max(0, (c.levels?.length ?? 1) - 1);
      else base += 1 + (indicators.has(c.name) ? Math.max(0, (c.levels?.length ?? 1) - 1) : 0) + (ranks.has(c.name) ? 1 : 0);
    }
    let level = 0;
    for (let l = 1; l <= MAX_MOMENT_BASIS_LEVEL; l++) {
      const D = base + bases.reduce((s, [, b]) => s + b.levels.slice(1, l + 1).reduce((t, terms) => t + terms.length, 0), 0);
      if ((table.rows * D * D) / 2 > BASIS_COMPUTE_BUDGET) break;
      level = l;
    }
    if (level > 0) for (const [v, b] of bases) basis.set(v, { levels: b.levels.slice(0, level + 1) });
  }
  return { indicators: [...indicators], ranks: [...ranks], basis };
}
