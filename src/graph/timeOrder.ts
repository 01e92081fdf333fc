/**
 * Time order of a graph: periods (groups of nodes, earliest first) and fixed traits (nodes that
 * nothing can cause). Both are declared in the graph file (`period:` and `fixed:` lines in the
 * arrows format, node attributes `period=N` and `fixed=true` in DOT; see docs/graph-format.md).
 *
 * Terms: an arrow a -> b *runs backwards* when a's period is later than b's; an arrow or a shared
 * unmeasured cause *enters a fixed node* when it would give that node a cause. Nodes in the same
 * period, or outside every period, carry no order between them (common practice: a cohort's
 * waves order its measurements, not the variables measured in one wave).
 */
import { GraphError } from "../errors.js";
import type { TimeOrder } from "./Graph.js";

/**
 * Build the time order of declared periods and fixed nodes; undefined when both are empty.
 * Cost: O(V) over the names listed.
 * @throws GraphError when a node is listed in two periods.
 * @example createTimeOrder([["age", "sex"], ["sbp"]], ["sex"])?.periodOf("sbp") // 2
 */
export function createTimeOrder(periods: ReadonlyArray<readonly string[]> = [], fixed: readonly string[] = []): TimeOrder | undefined {
  if (periods.length === 0 && fixed.length === 0) return undefined;
  const periodOf = new Map<string, number>();
  periods.forEach((group, i) => {
    for (const n of group) {
      const prev = periodOf.get(n);
      if (prev !== undefined && prev !== i + 1) {
        throw new GraphError(`"${n}" is listed in period ${prev} and in period ${i + 1}; a variable belongs to one period, so remove it from one of them`);
      }
      periodOf.set(n, i + 1);
    }
  });
  const fixedSet = new Set(fixed);
  return {
    periods: periods.map((g) => [...new Set(g)]),
    fixed: [...fixedSet],
    periodOf: (n) => periodOf.get(n),
    isFixed: (n) => fixedSet.has(n),
  };
}

/**
 * Why the time order forbids a direct cause `from -> to`, or undefined when it allows it: `to` is
 * fixed, or `from` belongs to a later period than `to`. Cost: O(1).
 * @example arrowAgainstTime(order, "stroke", "age") // "stroke (period 3) is later than age (period 1)"
 */
export function arrowAgainstTime(order: TimeOrder | undefined, from: string, to: string): string | undefined {
  if (!order) return undefined;
  if (order.isFixed(to)) return `${to} is declared fixed (nothing can cause it)`;
  const pf = order.periodOf(from);
  const pt = order.periodOf(to);
  if (pf !== undefined && pt !== undefined && pf > pt) return `${from} (period ${pf}) is later than ${to} (period ${pt})`;
  return undefined;
}

/**
 * Why the time order forbids a shared unmeasured cause `a <-> b`, or undefined: a fixed node has
 * no cause, so it shares none. Periods never forbid one (an unmeasured cause may act on an early
 * and a late variable alike). Cost: O(1).
 * @example sharedCauseAgainstTime(order, "sex", "bmi") // "sex is declared fixed (nothing can cause it)"
 */
export function sharedCauseAgainstTime(order: TimeOrder | undefined, a: string, b: string): string | undefined {
  if (!order) return undefined;
  for (const n of [a, b]) if (order.isFixed(n)) return `${n} is declared fixed (nothing can cause it)`;
  return undefined;
}

/**
 * The first arrow or shared cause of a graph's parts that breaks its time order, with the reason;
 * undefined when none does. Cost: O(E).
 * @example timeOrderViolation(order, [["sbp", "age"]], []) // { kind: "->", from: "sbp", to: "age", why: "…" }
 */
export function timeOrderViolation(
  order: TimeOrder | undefined,
  arrows: ReadonlyArray<readonly [string, string]>,
  bidirected: ReadonlyArray<readonly [string, string]>,
): { kind: "->" | "<->"; from: string; to: string; why: string } | undefined {
  if (!order) return undefined;
  for (const [a, b] of arrows) {
    const why = arrowAgainstTime(order, a, b);
    if (why) return { kind: "->", from: a, to: b, why };
  }
  for (const [a, b] of bidirected) {
    const why = sharedCauseAgainstTime(order, a, b);
    if (why) return { kind: "<->", from: a, to: b, why };
  }
  return undefined;
}

/** The error message for a declared edge that breaks the time order (without position). */
export function timeOrderMessage(v: { kind: "->" | "<->"; from: string; to: string; why: string }, show: (n: string) => string = (n) => n): string {
  return v.kind === "->"
    ? `arrow ${show(v.from)} -> ${show(v.to)} runs against the declared time order: ${v.why}; reverse or remove the arrow, or correct the period or fixed declaration`
    : `shared cause ${show(v.from)} <-> ${show(v.to)} gives a fixed variable a cause: ${v.why}; remove the shared cause or the fixed declaration`;
}
