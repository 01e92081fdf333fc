/**
 * The causal graph: a DAG of named nodes with directed arrows, plus optional
 * bidirected edges `a <-> b`, each standing for an unmeasured common cause of a and b.
 *
 * Terms: a node is *measured* when it is (expected to be) a column of the data;
 * *unmeasured* (latent) otherwise. `parents(n)` and `children(n)` refer to directed
 * arrows only; bidirected edges are reported separately by `spouses(n)`.
 *
 * Everything in stats/ and audit/ depends on this read-only interface only.
 */
export interface Graph {
  /** All nodes in declaration order (first appearance in the file). */
  readonly nodes: readonly string[];
  /** Directed arrows [from, to], in declaration order, without duplicates. */
  readonly arrows: ReadonlyArray<readonly [string, string]>;
  /** Bidirected edges [a, b] (unmeasured common causes), in declaration order, without duplicates. */
  readonly bidirected: ReadonlyArray<readonly [string, string]>;
  hasNode(name: string): boolean;
  isMeasured(name: string): boolean;
  parents(name: string): readonly string[];
  children(name: string): readonly string[];
  /** Nodes joined to `name` by a bidirected edge. */
  spouses(name: string): readonly string[];
  /** A deterministic topological order: Kahn's algorithm, ties broken by name (code-point order). */
  readonly topologicalOrder: readonly string[];
  /** Position of a node in `topologicalOrder`. */
  orderIndex(name: string): number;
  /** What the graph file says about time: periods in order and fixed traits; absent when it says nothing. */
  readonly timeOrder?: TimeOrder;
}

/**
 * Time order declared with the graph. A *period* is a group of nodes measured or determined at
 * the same stage; periods are numbered from 1 (earliest). A node in a later period cannot cause a
 * node in an earlier one; nodes in one period, or outside every period, may cause each other.
 * A *fixed* node (a trait such as the year of birth) has no cause at all, measured or not.
 */
export interface TimeOrder {
  /** The periods, earliest first, each its nodes in declaration order. */
  readonly periods: ReadonlyArray<readonly string[]>;
  /** The fixed nodes, in declaration order. */
  readonly fixed: readonly string[];
  /** The period (1-based) of a node, or undefined when it is in none. */
  periodOf(name: string): number | undefined;
  isFixed(name: string): boolean;
}
