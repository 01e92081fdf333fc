/**
 * Grouping identical rows of categorical variables into weighted counts.
 *
 * Terms: a *complete case* is a row where every requested variable is observed (code ≥ 0) and
 * the row filter, if any, lets the row through. A *group* is one distinct combination of codes
 * among the complete cases; its *count* is the number of complete cases with that combination.
 * Groups are built one variable at a time: the running group id of a row times the next
 * variable's number of levels plus its code is renumbered densely, so keys never exceed
 * (number of groups so far) × (levels), whatever the number of variables. When the product of
 * the numbers of levels is at most 2^22 (the usual case) the codes are instead encoded in one
 * pass per variable into a single mixed-radix key per row, renumbered in one pass through a
 * reused lookup array; both ways number the groups in order of first appearance.
 */
import type { Column } from "../../data/Table.js";

export interface GroupedRows {
  /** Complete cases. */
  n: number;
  /** Number of distinct combinations. */
  groups: number;
  /** Complete cases per group. */
  counts: Float64Array;
  /** Per variable (in request order), its code in each group. */
  codes: Int32Array[];
  /** Per variable, its number of levels (`levels.length` of the column). */
  levels: number[];
  /** Group of each table row, −1 when the row is not a complete case. */
  rowGroup: Int32Array;
}

/** Dense renumbering of keys in [0, range) — a lookup array when small, else a hash map. */
function renumber(keys: Int32Array | Float64Array, rows: number, range: number, out: Int32Array): number {
  let next = 0;
  if (range <= 1 << 22) {
    const map = new Int32Array(range).fill(-1);
    for (let r = 0; r < rows; r++) {
      if (out[r]! < 0) continue;
      const k = keys[r]!;
      let id = map[k]!;
      if (id < 0) {
        id = next++;
        map[k] = id;
      }
      out[r] = id;
    }
  } else {
    const map = new Map<number, number>();
    for (let r = 0; r < rows; r++) {
      if (out[r]! < 0) continue;
      const k = keys[r]!;
      let id = map.get(k);
      if (id === undefined) {
        id = next++;
        map.set(k, id);
      }
      out[r] = id;
    }
  }
  return next;
}

/** Widest mixed-radix key range served by the reused lookup array. */
const DIRECT_LIMIT = 1 << 22;
/** Reused lookup from key to group (−1 when unused; entries reset after each use). */
let directMap = new Int32Array(0);
/** Reused per-row keys. */
let keyScratch = new Int32Array(0);

/**
 * One-key grouping: key = Σ code·radix per row (−1 for rows that are not complete cases), then
 * dense renumbering in row order. Returns the group of each row and, per group, its key.
 */
function groupByDirectKey(columns: readonly Column[], rows: number, rowFilter: Uint8Array | undefined, range: number): { rowGroup: Int32Array; groupKey: Int32Array; groups: number; n: number } {
  if (keyScratch.length < rows) keyScratch = new Int32Array(rows);
  const key = keyScratch;
  if (rowFilter) for (let r = 0; r < rows; r++) key[r] = rowFilter[r] ? 0 : -1;
  else key.fill(0, 0, rows);
  let radix = 1;
  for (const c of columns) {
    addCodes(key, c.codes!, rows, radix);
    radix *= Math.max(1, c.levels!.length);
  }
  if (directMap.length < range) directMap = new Int32Array(Math.max(range, 1024)).fill(-1);
  const map = directMap;
  const rowGroup = new Int32Array(rows);
  const firstKey: number[] = [];
  let n = 0;
  for (let r = 0; r < rows; r++) {
    const k = key[r]!;
    if (k < 0) {
      rowGroup[r] = -1;
      continue;
    }
    n++;
    let id = map[k]!;
    if (id < 0) {
      id = firstKey.length;
      map[k] = id;
      firstKey.push(k);
    }
    rowGroup[r] = id;
  }
  const groupKey = Int32Array.from(firstKey);
  for (let g = 0; g < groupKey.length; g++) map[groupKey[g]!] = -1;
  return { rowGroup, groupKey, groups: groupKey.length, n };
}

/** key[r] += radix·codes[r] where both are non-negative; key[r] = −1 where the code is missing. */
function addCodes(key: Int32Array, codes: Int32Array, rows: number, radix: number): void {
  for (let r = 0; r < rows; r++) {
    const c = codes[r]!;
    const k = key[r]!;
    key[r] = c < 0 || k < 0 ? -1 : k + c * radix;
  }
}

/**
 * Group the complete cases of categorical columns into distinct code combinations with counts.
 * Cost: O(rows · k) time for k columns, O(rows) memory.
 * @throws TypeError when a column has no `codes` (it is not categorical)
 * @example
 * const g = groupRows([sex, smoker]);
 * g.groups; // at most levels(sex) × levels(smoker)
 */
export function groupRows(columns: readonly Column[], rows: number, rowFilter?: Uint8Array): GroupedRows {
  for (const c of columns) {
    if (!c.codes || !c.levels) throw new TypeError(`column "${c.name}" is ${c.type}, not categorical; group only binary, ordinal or nominal columns`);
  }
  let range = 1;
  for (const c of columns) range *= Math.max(1, c.levels!.length);
  if (range <= DIRECT_LIMIT) {
    const direct = groupByDirectKey(columns, rows, rowFilter, range);
    const groups = direct.n === 0 ? 0 : direct.groups;
    const counts = new Float64Array(groups);
    const rg = direct.rowGroup;
    for (let r = 0; r < rows; r++) {
      const g = rg[r]!;
      if (g >= 0) counts[g]++;
    }
    const codesOut = columns.map(() => new Int32Array(groups));
    let radix = 1;
    columns.forEach((c, v) => {
      const L = Math.max(1, c.levels!.length);
      const out = codesOut[v]!;
      for (let g = 0; g < groups; g++) out[g] = Math.floor(direct.groupKey[g]! / radix) % L;
      radix *= L;
    });
    return { n: direct.n, groups, counts, codes: codesOut, levels: columns.map((c) => c.levels!.length), rowGroup: rg };
  }
  const rowGroup = new Int32Array(rows);
  if (rowFilter) for (let r = 0; r < rows; r++) rowGroup[r] = rowFilter[r] ? 0 : -1;
  for (const c of columns) {
    const codes = c.codes!;
    for (let r = 0; r < rows; r++) if (codes[r]! < 0) rowGroup[r] = -1;
  }
  let groups = 1;
  // parent[v][g] and code[v][g]: how group g after variable v was formed.
  const parents: Int32Array[] = [];
  const stepCodes: Int32Array[] = [];
  const keys = new Float64Array(rows);
  for (const c of columns) {
    const L = Math.max(1, c.levels!.length);
    const codes = c.codes!;
    for (let r = 0; r < rows; r++) if (rowGroup[r]! >= 0) keys[r] = rowGroup[r]! * L + codes[r]!;
    const prev = rowGroup.slice();
    const next = renumber(keys, rows, groups * L, rowGroup);
    const parent = new Int32Array(next);
    const code = new Int32Array(next);
    for (let r = 0; r < rows; r++) {
      const g = rowGroup[r]!;
      if (g < 0) continue;
      parent[g] = prev[r]!;
      code[g] = codes[r]!;
    }
    parents.push(parent);
    stepCodes.push(code);
    groups = next;
  }
  const counts = new Float64Array(groups);
  let n = 0;
  for (let r = 0; r < rows; r++) {
    const g = rowGroup[r]!;
    if (g >= 0) {
      counts[g] = counts[g]! + 1;
      n++;
    }
  }
  if (n === 0) groups = 0;
  const k = columns.length;
  const codesOut = columns.map(() => new Int32Array(groups));
  for (let g = 0; g < groups; g++) {
    let id = g;
    for (let v = k - 1; v >= 0; v--) {
      codesOut[v]![g] = stepCodes[v]![id]!;
      id = parents[v]![id]!;
    }
  }
  return { n, groups, counts: n === 0 ? new Float64Array(0) : counts, codes: codesOut, levels: columns.map((c) => c.levels!.length), rowGroup };
}
