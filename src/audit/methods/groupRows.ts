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
 * A *stratum* of a claim x ⫫ y | given is one combination of the given variables' codes seen
 * among the complete cases (a single stratum when nothing is given); its *compact table* counts
 * the complete cases by (x level, y level) over the levels seen in that stratum only.
 * *Weights* (data given as counts, `--counts`): a row of weight w stands for w units, so it adds
 * w to its group's count and to n, and a row of weight 0 is no complete case at all: the groups,
 * strata and their order are then those of the table with each row repeated w times.
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

/** The row filter that also leaves out rows of weight 0 (they stand for no unit). */
function unitRows(rows: number, rowFilter: Uint8Array | undefined, weights: Float64Array): Uint8Array {
  const out = new Uint8Array(rows);
  for (let r = 0; r < rows; r++) out[r] = weights[r]! > 0 && (!rowFilter || rowFilter[r]) ? 1 : 0;
  return out;
}

/** The grouping `g` of rows with each row counted as its weight (the groups' counts and n summed in row order). */
function weighted(g: GroupedRows, weights: Float64Array): GroupedRows {
  const counts = new Float64Array(g.groups);
  let n = 0;
  const rg = g.rowGroup;
  for (let r = 0; r < rg.length; r++) {
    const k = rg[r]!;
    if (k < 0) continue;
    counts[k] = counts[k]! + weights[r]!;
    n += weights[r]!;
  }
  return { ...g, n, counts };
}

/**
 * Group the complete cases of categorical columns into distinct code combinations with counts
 * (with `weights`, each row counted as its weight; see the module comment).
 * Cost: O(rows · k) time for k columns, O(rows) memory.
 * @throws TypeError when a column has no `codes` (it is not categorical)
 * @example
 * const g = groupRows([sex, smoker]);
 * g.groups; // at most levels(sex) × levels(smoker)
 */
export function groupRows(columns: readonly Column[], rows: number, rowFilter?: Uint8Array, weights?: Float64Array): GroupedRows {
  for (const c of columns) {
    if (!c.codes || !c.levels) throw new TypeError(`column "${c.name}" is ${c.type}, not categorical; group only binary, ordinal or nominal columns`);
  }
  if (weights) return weighted(groupRows(columns, rows, unitRows(rows, rowFilter, weights)), weights);
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

/** One stratum's compact x × y table over the x and y levels seen in it. */
export interface CompactStratum {
  /** Number of x levels seen in the stratum (table rows). */
  rows: number;
  /** Number of y levels seen in the stratum (table columns). */
  cols: number;
  /** Complete cases per (x level, y level), row-major. */
  counts: Float64Array;
  /** The x code (index into the x column's levels) of each table row. */
  xCodes: Int32Array;
  /** The y code of each table column. */
  yCodes: Int32Array;
}

export interface GroupedStrata {
  /** Complete cases of x, y and the given variables. */
  n: number;
  /** One compact table per stratum seen (one stratum when nothing is given), in order of first appearance. */
  strata: CompactStratum[];
  /** When x and y both have two levels: each stratum's full 2 × 2 table [x0y0, x0y1, x1y0, x1y1] by code. */
  twoByTwo?: Float64Array[];
}

/**
 * Group the complete cases of categorical x, y and given variables into one compact x × y table
 * per stratum (a stratum is one combination of the given variables' codes seen among the
 * complete cases; with `weights`, each row counted as its weight). Strata are numbered one given
 * variable at a time in order of first appearance, and a table's rows and columns list the x and
 * y levels in the order the stratum's groups first show them.
 * Cost: O(rows · (k + 2)) for grouping (see {@link groupRows}) plus O(groups) for the tables.
 * @throws TypeError when a column is not categorical
 * @example
 * const { n, strata } = groupStrata(sex, admitted, [dept], table.rows);
 * strata[0]!.counts; // the first department's sex × admitted counts
 */
export function groupStrata(x: Column, y: Column, given: readonly Column[], rows: number, rowFilter?: Uint8Array, weights?: Float64Array): GroupedStrata {
  const g = groupRows([...given, x, y], rows, rowFilter, weights);
  const k = given.length;
  // Dense stratum id per group, one given variable at a time.
  const stratumOf = new Int32Array(g.groups);
  let count = g.groups > 0 ? 1 : 0;
  for (let v = 0; v < k; v++) {
    const L = g.levels[v]!;
    const map = new Map<number, number>();
    const codes = g.codes[v]!;
    for (let i = 0; i < g.groups; i++) {
      const key = stratumOf[i]! * L + codes[i]!;
      let id = map.get(key);
      if (id === undefined) {
        id = map.size;
        map.set(key, id);
      }
      stratumOf[i] = id;
    }
    count = map.size;
  }
  // Counting sort of groups by stratum.
  const start = new Int32Array(count + 1);
  for (let i = 0; i < g.groups; i++) start[stratumOf[i]! + 1]++;
  for (let s = 0; s < count; s++) start[s + 1] = start[s + 1]! + start[s]!;
  const order = new Int32Array(g.groups);
  const fill = start.slice(0, count);
  for (let i = 0; i < g.groups; i++) order[fill[stratumOf[i]!]!++] = i;
  const xc = g.codes[k]!;
  const yc = g.codes[k + 1]!;
  const xIndex = new Int32Array(g.levels[k]!).fill(-1);
  const yIndex = new Int32Array(g.levels[k + 1]!).fill(-1);
  const strata: CompactStratum[] = [];
  const full: Float64Array[] = [];
  const twoByTwo = g.levels[k] === 2 && g.levels[k + 1] === 2;
  for (let s = 0; s < count; s++) {
    const xs: number[] = [];
    const ys: number[] = [];
    for (let t = start[s]!; t < start[s + 1]!; t++) {
      const i = order[t]!;
      if (xIndex[xc[i]!]! < 0) {
        xIndex[xc[i]!] = xs.length;
        xs.push(xc[i]!);
      }
      if (yIndex[yc[i]!]! < 0) {
        yIndex[yc[i]!] = ys.length;
        ys.push(yc[i]!);
      }
    }
    const counts = new Float64Array(xs.length * ys.length);
    const table = new Float64Array(4);
    for (let t = start[s]!; t < start[s + 1]!; t++) {
      const i = order[t]!;
      counts[xIndex[xc[i]!]! * ys.length + yIndex[yc[i]!]!] += g.counts[i]!;
      if (twoByTwo) table[xc[i]! * 2 + yc[i]!] += g.counts[i]!;
    }
    for (const v of xs) xIndex[v] = -1;
    for (const v of ys) yIndex[v] = -1;
    strata.push({ rows: xs.length, cols: ys.length, counts, xCodes: Int32Array.from(xs), yCodes: Int32Array.from(ys) });
    if (twoByTwo) full.push(table);
  }
  return { n: g.n, strata, ...(twoByTwo ? { twoByTwo: full } : {}) };
}

/**
 * The untestable reason of a stratified claim in which x and y never vary together within a
 * stratum, in plain words. Cost: O(k).
 * @example neverBothVary({ x: "a", y: "b", given: ["s"] }, 12, 40) // '"a" and "b" never both vary within any stratum of "s" (12 strata, 40 complete rows); …'
 */
export function neverBothVary(claim: { x: string; y: string; given: readonly string[] }, strataTotal: number, n: number): string {
  const where = claim.given.length ? ` within any stratum of ${claim.given.map((g) => `"${g}"`).join(", ")}` : "";
  return `"${claim.x}" and "${claim.y}" never both vary${where} (${strataTotal} strata, ${n} complete rows); the claim cannot be tested with these data`;
}

/** The warning for strata that contribute nothing (a single row, or a single level of x or y), if any. Cost: O(1). */
export function unusedStrataWarning(claim: { x: string; y: string }, strataUsed: number, strataTotal: number): string | undefined {
  const unused = strataTotal - strataUsed;
  return unused > 0 ? `${unused} of ${strataTotal} strata have a single row or a single level of "${claim.x}" or "${claim.y}" and contribute nothing` : undefined;
}
