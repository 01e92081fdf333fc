/**
 * Matching graph nodes to data columns.
 *
 * Terms: a graph node is *measured* unless the graph declares it unmeasured or the caller
 * lists it in `options.unmeasured`. Every measured node must be a data column: a case-sensitive
 * match after Unicode normalisation of both names to NFC (Unicode Standard Annex #15, "Unicode
 * Normalization Forms"), so `âge` typed as one code point in the graph and as `a` with a
 * combining circumflex in the file are one name; such pairs are listed in `normalised`. A column
 * that is not a node is *ignored*. For a missing node we
 * suggest the columns nearest by *edit distance*: the Levenshtein distance (the least number
 * of single-character insertions, deletions and substitutions turning one string into the
 * other; V. I. Levenshtein, 1966, "Binary codes capable of correcting deletions, insertions,
 * and reversals", Soviet Physics Doklady 10(8):707–710), computed here on lower-cased code
 * points with the dynamic programme of R. A. Wagner and M. J. Fischer (1974), "The
 * string-to-string correction problem", Journal of the ACM 21(1):168–173.
 */
import { UnknownNodeError } from "../errors.js";
import type { Graph } from "./Graph.js";
import { displayName } from "./parseGraph.js";

export interface CheckColumnsOptions {
  /** More nodes to treat as unmeasured (e.g. from --unmeasured); each must be a graph node. */
  unmeasured?: readonly string[];
  /** The data file name, for messages. */
  file?: string;
}

export interface ColumnCheck {
  /** Columns that are not graph nodes, in column order: the audit does not use them. */
  ignoredColumns: string[];
  /** Columns whose node is declared unmeasured, in column order: the audit does not use them either. */
  unmeasuredColumns: string[];
  /** Nodes that match their column only after NFC normalisation (spelled in different Unicode forms). */
  normalised: { node: string; column: string }[];
}

/**
 * Levenshtein distance between two strings, case-insensitive, over Unicode code points.
 * Cost: O(|a|·|b|) time, O(|b|) memory (Wagner–Fischer, one row).
 * @example
 * editDistanceIgnoreCase("SBP", "sbp_0"); // 2
 */
export function editDistanceIgnoreCase(a: string, b: string): number {
  const s = Array.from(a.toLowerCase());
  const t = Array.from(b.toLowerCase());
  let row = Array.from({ length: t.length + 1 }, (_, j) => j);
  for (let i = 1; i <= s.length; i++) {
    const next = [i];
    for (let j = 1; j <= t.length; j++) {
      const sub = row[j - 1]! + (s[i - 1] === t[j - 1] ? 0 : 1);
      next.push(Math.min(sub, row[j]! + 1, next[j - 1]! + 1));
    }
    row = next;
  }
  return row[t.length]!;
}

/**
 * Up to `limit` candidates nearest to `name` by case-insensitive edit distance, nearest first
 * (ties in candidate order), keeping only those close enough to be a plausible typo: distance at
 * most max(2, ⌊longer length / 3⌋).
 * Cost: O(k·L²) for k candidates of length about L.
 * @example
 * findClosestNames("sbp", ["age", "SBP", "sbp0", "stroke"]); // ["SBP", "sbp0"]
 */
export function findClosestNames(name: string, candidates: readonly string[], limit = 3): string[] {
  const len = Array.from(name).length;
  const scored: Array<{ c: string; d: number; i: number }> = [];
  candidates.forEach((c, i) => {
    const d = editDistanceIgnoreCase(name, c);
    const allowed = Math.max(2, Math.floor(Math.max(len, Array.from(c).length) / 3));
    if (d <= allowed && c.normalize("NFC") !== name.normalize("NFC")) scored.push({ c, d, i });
  });
  scored.sort((x, y) => x.d - y.d || x.i - y.i);
  return scored.slice(0, limit).map((s) => s.c);
}

/**
 * Check that every measured node of the graph is a column of the data, and name the columns the
 * graph does not use.
 *
 * Cost: O(V + C) with hashing, plus O(M·C·L²) to find suggestions for M missing nodes among C
 * columns of length about L (only when something is missing).
 * Source: edit distance of Levenshtein (1966), see the module comment.
 *
 * @throws UnknownNodeError when measured nodes are not columns (one line per missing node, with
 *   up to 3 close column names), or when `options.unmeasured` names a node the graph lacks;
 *   `names` holds the offending names. Names are compared in NFC (see the module comment).
 * @example
 * const g = createGraph({ arrows: [["age", "sbp"]] });
 * checkColumns(g, ["id", "age", "sbp"]).ignoredColumns; // ["id"]
 */
export function checkColumns(graph: Graph, columns: readonly string[], options: CheckColumnsOptions = {}): ColumnCheck {
  const where = options.file !== undefined && options.file !== "" ? `${options.file}: ` : "";
  const extra = options.unmeasured ?? [];
  const strangers = extra.filter((n) => !graph.hasNode(n));
  if (strangers.length > 0) {
    const lines = strangers.map((n) => {
      const near = findClosestNames(n, graph.nodes);
      return `  ${displayName(n)}${near.length ? ` (did you mean ${near.map(displayName).join(", ")}?)` : ""}`;
    });
    throw new UnknownNodeError(
      `--unmeasured names ${strangers.length === 1 ? "a node" : "nodes"} the graph does not have; ` +
        `use the node names as written in the graph file\n${lines.join("\n")}`,
      strangers,
    );
  }
  const extraSet = new Set(extra);
  const measured = (n: string) => graph.isMeasured(n) && !extraSet.has(n);
  const columnByNfc = new Map(columns.map((c) => [c.normalize("NFC"), c]));
  const nodeByNfc = new Map(graph.nodes.map((n) => [n.normalize("NFC"), n]));
  const missing = graph.nodes.filter((n) => measured(n) && !columnByNfc.has(n.normalize("NFC")));
  if (missing.length > 0) {
    const lines = missing.map((n) => {
      const near = findClosestNames(n, columns);
      return `  ${displayName(n)}${near.length ? ` (did you mean ${near.map((c) => displayName(c)).join(", ")}?)` : ""}`;
    });
    const one = missing.length === 1;
    const example = displayName(missing[0]!);
    throw new UnknownNodeError(
      `${where}${one ? "a graph node is" : `${missing.length} graph nodes are`} not ${one ? "a column" : "columns"} of the data; ` +
        `rename the column or the node so they match exactly (case matters), or declare the node unmeasured ` +
        `in the graph file (unmeasured: ${example}) or with --unmeasured ${example}\n${lines.join("\n")}`,
      missing,
      { file: options.file },
    );
  }
  const nodeOf = (c: string) => nodeByNfc.get(c.normalize("NFC"));
  const ignoredColumns = columns.filter((c) => nodeOf(c) === undefined);
  const unmeasuredColumns = columns.filter((c) => nodeOf(c) !== undefined && !measured(nodeOf(c)!));
  const normalised = columns.flatMap((c) => {
    const node = nodeOf(c);
    return node !== undefined && node !== c ? [{ node, column: c }] : [];
  });
  return { ignoredColumns, unmeasuredColumns, normalised };
}
