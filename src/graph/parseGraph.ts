/**
 * The arrowaudit plain-text graph format ("arrows format"), one statement per line.
 *
 * Terms used below:
 * - *statement*: the text of one line without its comment; a line may also be blank.
 * - *name*: a node name, either bare (letters of any script, digits, `_` and `.`) or
 *   double-quoted (any text; `\"` and `\\` are the only escapes).
 * - *list*: one or more names separated by commas.
 * - *chain*: lists joined by `->` (direct cause: every name on the left causes every
 *   name on the right) or `<->` (every left/right pair shares an unmeasured common cause).
 * - *keyword statement*: `unmeasured: name, name` marks nodes that are not columns of the data;
 *   `period: name, name` declares the next period of the time order (the first `period:` line is
 *   the earliest); `fixed: name, name` marks nodes that nothing can cause (see `timeOrder.ts`).
 *
 * The full grammar, with examples, is in docs/graph-format.md. Positions in messages are
 * 1-based lines and columns, columns counted in Unicode code points.
 */
import { CycleError, GraphError, InputError } from "../errors.js";
import type { Graph, TimeOrder } from "./Graph.js";
import { createGraph, type GraphSpec } from "./createGraph.js";
import { arrowAgainstTime, createTimeOrder, sharedCauseAgainstTime, timeOrderMessage } from "./timeOrder.js";
import { duplicateWarnings } from "./duplicateWarnings.js";

/** A parsed graph plus the non-fatal remarks about its source (duplicates and the like). */
export interface ParsedGraph {
  graph: Graph;
  /** One line each, `file:line: what; what happens`, in source order. */
  warnings: string[];
}

export interface ParseGraphOptions {
  /** File name used in messages; omitted, messages say `line 3, column 7`. */
  file?: string;
}

// ---------------------------------------------------------------------------
// Message helpers shared with parseDot.ts
// ---------------------------------------------------------------------------

/**
 * Format a source location for the start of a message: `graph.txt:3:7`, `graph.txt:3`,
 * or `line 3, column 7` when there is no file name. O(1).
 * @example
 * formatSourceLocation("g.txt", 3, 7); // "g.txt:3:7"
 */
export function formatSourceLocation(file: string | undefined, line: number, column?: number): string {
  if (file !== undefined && file !== "") return column === undefined ? `${file}:${line}` : `${file}:${line}:${column}`;
  return column === undefined ? `line ${line}` : `line ${line}, column ${column}`;
}

/**
 * Format a source snippet: two lines, indented by two spaces, showing a source line (trailing
 * blanks dropped) and a caret under `column` (1-based, in code points). Tabs before the column
 * are copied into the caret line so both lines expand alike. O(line length).
 * @example
 * formatSourceSnippet("a => b", 3); // "  a => b\n    ^"
 */
export function formatSourceSnippet(sourceLine: string, column: number): string {
  const chars = Array.from(sourceLine.replace(/[ \t]+$/u, ""));
  let pad = "";
  for (let i = 0; i < column - 1; i++) pad += chars[i] === "\t" ? "\t" : " ";
  return `  ${chars.join("")}\n  ${pad}^`;
}

/**
 * Display a node name as the arrows format would need it written: bare when it is a valid bare
 * name, else double-quoted with `"` and `\\` escaped. O(name length).
 * @example
 * displayName("systolic bp"); // '"systolic bp"'
 */
export function displayName(name: string): string {
  return BARE_NAME.test(name) ? name : `"${name.replace(/[\\"]/gu, (c) => "\\" + c)}"`;
}

/**
 * Split source text into lines after dropping a leading byte-order mark; LF, CRLF and CR all end
 * a line. O(n).
 * @example
 * splitSourceLines("\uFEFFa\r\nb"); // ["a", "b"]
 */
export function splitSourceLines(text: string): string[] {
  return text.replace(/^\uFEFF/u, "").split(/\r\n|\r|\n/u);
}

/**
 * Build a positioned source error of class `Kind` with the standard message shape
 * `where: what; what to do` + newline + the source line + newline + a caret. O(line length).
 * @example
 * sourceError(InputError, "g.txt", ["a => b"], 1, 3, "unknown arrow '=>'; write '->'").message;
 * // "g.txt:1:3: unknown arrow '=>'; write '->'\n  a => b\n    ^"
 */
export function sourceError<E extends InputError>(
  Kind: new (message: string, pos: { file?: string; line?: number; column?: number }) => E,
  file: string | undefined,
  lines: readonly string[],
  line: number,
  column: number,
  what: string,
): E {
  const text = lines[line - 1] ?? "";
  return new Kind(`${formatSourceLocation(file, line, column)}: ${what}\n${formatSourceSnippet(text, column)}`, {
    file,
    line,
    column,
  });
}

/** Where one arrow of a parsed file was declared, to point a cycle message at a line. */
export interface ArrowSite {
  from: string;
  to: string;
  line: number;
  column: number;
}

/**
 * Create a graph from parsed parts with cycle positions: runs createGraph and, when it finds a
 * cycle, rethrows the CycleError with the position of the cycle's arrow declared last (the one
 * that closed it) and a caret snippet of that line. Cost: that of createGraph, plus O(E) on a cycle.
 * @throws CycleError positioned as above; other errors of createGraph unchanged.
 * @example
 * createGraphWithSites({ arrows: [["a", "b"]] }, [{ from: "a", to: "b", line: 1, column: 3 }], "g.txt", ["a -> b"]).arrows;
 * // [["a", "b"]]
 */
export function createGraphWithSites(
  spec: GraphSpec,
  sites: readonly ArrowSite[],
  file: string | undefined,
  lines: readonly string[],
): Graph {
  try {
    return createGraph(spec);
  } catch (err) {
    if (!(err instanceof CycleError)) throw err;
    const cycle = err.cycle;
    const pairs = new Set<string>();
    for (let i = 0; i + 1 < cycle.length; i++) pairs.add(JSON.stringify([cycle[i], cycle[i + 1]]));
    let last: ArrowSite | undefined;
    for (const s of sites) if (pairs.has(JSON.stringify([s.from, s.to]))) last = s;
    if (!last) throw new CycleError(cycle, { file });
    const e = new CycleError(cycle, { file, line: last.line, column: last.column });
    // createGraph was called without a position, so its message starts at "cycle: ...".
    e.message =
      `${formatSourceLocation(file, last.line, last.column)}: ${err.message} ` +
      `(the arrow ${displayName(last.from)} -> ${displayName(last.to)} here closes the cycle)\n` +
      formatSourceSnippet(lines[last.line - 1] ?? "", last.column);
    throw e;
  }
}

// ---------------------------------------------------------------------------
// Tokens of one line
// ---------------------------------------------------------------------------

const BARE_NAME = /^[\p{L}\p{M}\p{N}_.]+$/u;
const NAME_CHAR = /[\p{L}\p{M}\p{N}_.]/u;
const OPERATOR_CHARS = new Set(["-", "=", "<", ">", "~"]);

type Token =
  | { kind: "name"; value: string; quoted: boolean; col: number; end: number }
  | { kind: "->" | "<->" | "<-" | "," | ":"; col: number; end: number };

/** Lookalike characters people paste from word processors, with what to write instead. */
const LOOKALIKES: Record<string, string> = {
  "\u2192": "->", // →
  "\u27F6": "->", // ⟶
  "\u21D2": "->", // ⇒
  "\u2194": "<->", // ↔
  "\u27F7": "<->", // ⟷
  "\u21D4": "<->", // ⇔
  "\u201C": '"', // “
  "\u201D": '"', // ”
};

class LineTokenizer {
  private readonly chars: string[];
  private i = 0;
  constructor(
    private readonly text: string,
    private readonly fail: (column: number, what: string, Kind?: typeof InputError) => never,
  ) {
    this.chars = Array.from(text);
  }

  tokens(): Token[] {
    const out: Token[] = [];
    const c = this.chars;
    while (this.i < c.length) {
      const ch = c[this.i]!;
      const col = this.i + 1;
      if (/\s/u.test(ch)) {
        this.i++;
      } else if (ch === "#") {
        break;
      } else if (ch === '"') {
        out.push(this.quoted());
      } else if (ch === ",") {
        out.push({ kind: ",", col, end: col + 1 });
        this.i++;
      } else if (ch === ":") {
        out.push({ kind: ":", col, end: col + 1 });
        this.i++;
      } else if (NAME_CHAR.test(ch)) {
        let j = this.i;
        while (j < c.length && NAME_CHAR.test(c[j]!)) j++;
        out.push({ kind: "name", value: c.slice(this.i, j).join(""), quoted: false, col, end: j + 1 });
        this.i = j;
      } else if (OPERATOR_CHARS.has(ch)) {
        out.push(this.operator());
      } else if (LOOKALIKES[ch] !== undefined) {
        const want = LOOKALIKES[ch];
        this.fail(
          col,
          want === '"'
            ? `typographic quote '${ch}'; write names in plain double quotes ("...")`
            : `unexpected character '${ch}'; write '${want}' with plain keyboard characters`,
        );
      } else if (ch === ";") {
        this.fail(col, "unexpected ';'; write one statement per line without a ';'");
      } else {
        this.fail(
          col,
          `unexpected character '${ch}'; bare names may contain letters, digits, '_' and '.', ` +
            `so put a name like this in double quotes, e.g. "a${ch}b"`,
        );
      }
    }
    return out;
  }

  private operator(): Token {
    const c = this.chars;
    const start = this.i;
    let j = start;
    while (j < c.length && OPERATOR_CHARS.has(c[j]!)) j++;
    const op = c.slice(start, j).join("");
    const col = start + 1;
    this.i = j;
    if (op === "->" || op === "<->" || op === "<-") return { kind: op, col, end: j + 1 };
    const prev = start > 0 ? c[start - 1]! : "";
    const next = j < c.length ? c[j]! : "";
    if (op === "-" && NAME_CHAR.test(prev) && NAME_CHAR.test(next)) {
      let a = start;
      while (a > 0 && NAME_CHAR.test(c[a - 1]!)) a--;
      let b = j;
      while (b < c.length && (NAME_CHAR.test(c[b]!) || c[b] === "-")) b++;
      this.fail(
        col,
        `'-' cannot be part of a bare name; put the name in double quotes: "${c.slice(a, b).join("")}"`,
      );
    }
    if (op === "<=>" || op === "<>" || op === "<-->" || op === "<~>") {
      this.fail(col, `unknown arrow '${op}'; write '<->' for a shared unmeasured cause`);
    }
    this.fail(
      col,
      `unknown arrow '${op}'; write '->' for a direct cause (or '<->' for a shared unmeasured cause)`,
    );
  }

  private quoted(): Token {
    const c = this.chars;
    const start = this.i;
    let value = "";
    let j = start + 1;
    for (;;) {
      if (j >= c.length) {
        this.fail(start + 1, `unterminated quoted name; add the closing '"' on the same line`);
      }
      const ch = c[j]!;
      if (ch === '"') break;
      if (ch === "\\") {
        const nx = c[j + 1];
        if (nx === '"' || nx === "\\") {
          value += nx;
          j += 2;
          continue;
        }
        this.fail(
          j + 1,
          `unknown escape '\\${nx ?? ""}' in a quoted name; only \\" and \\\\ are escapes, write \\\\ for a backslash`,
        );
      }
      value += ch;
      j++;
    }
    this.i = j + 1;
    if (value.trim() === "") this.fail(start + 1, `empty quoted name; write a name between the quotes or remove them`);
    return { kind: "name", value, quoted: true, col: start + 1, end: j + 2 };
  }
}

// ---------------------------------------------------------------------------
// The parser
// ---------------------------------------------------------------------------

const KEYWORDS = ["unmeasured", "period", "fixed"] as const;
/** How messages name the keywords. */
const KEYWORD_LIST = '"unmeasured:", "period:" and "fixed:"';
/** An example list per keyword, for the message when the list is empty. */
const KEYWORD_EXAMPLE: Record<(typeof KEYWORDS)[number], string> = {
  unmeasured: "list the variables that are not in the data, e.g. unmeasured: u, v",
  period: "list the variables of this period, e.g. period: age, sex",
  fixed: "list the variables nothing can cause, e.g. fixed: sex, birth_year",
};

/**
 * Parse a graph written in the arrowaudit plain-text format (see docs/graph-format.md) into a
 * validated causal graph.
 *
 * Statements, one per line: `a -> b -> c` (direct causes, chains), `a, b -> c, d` (every
 * left name to every right name), `a <-> b` (shared unmeasured cause), `unmeasured: u, v`,
 * and a lone name for an isolated node. `#` starts a comment outside quotes. Tolerates a
 * UTF-8 byte-order mark, CRLF line ends, tabs and trailing spaces. Duplicate arrows, shared
 * causes and unmeasured declarations become warnings, not errors.
 *
 * Cost: O(n + E log V) for n characters, E arrows (a list-to-list statement contributes
 * |left|·|right| arrows) and V nodes; the graph itself is checked with createGraph.
 * Source: the format is arrowaudit's own, defined in docs/graph-format.md.
 *
 * @throws InputError for a syntax error (unterminated quote, dangling or unknown arrow, unknown
 *   keyword...), message `file:line:column: what; what to do` followed by the line and a caret.
 * @throws GraphError for a self-arrow (with its position) or a file without statements.
 * @throws CycleError naming one directed cycle, positioned at the arrow of the cycle declared last.
 * @example
 * const { graph, warnings } = parseGraph("age -> sbp -> stroke\nage -> stroke\n", { file: "g.txt" });
 * graph.parents("stroke"); // ["sbp", "age"]
 * warnings; // []
 */
export function parseGraph(text: string, options: ParseGraphOptions = {}): ParsedGraph {
  const file = options.file;
  const lines = splitSourceLines(text);
  const warnings: string[] = [];
  const repeats = duplicateWarnings(warnings);
  const nodes: string[] = [];
  const seenNodes = new Set<string>();
  const arrows: Array<readonly [string, string]> = [];
  const sites: ArrowSite[] = [];
  const arrowLine = new Map<string, number>();
  const bidirected: Array<readonly [string, string]> = [];
  const biLine = new Map<string, number>();
  const unmeasured: string[] = [];
  const unmeasuredLine = new Map<string, number>();
  const periods: string[][] = [];
  const periodSite = new Map<string, { period: number; line: number }>();
  const fixed: string[] = [];
  const fixedLine = new Map<string, number>();
  const biSites: ArrowSite[] = [];
  let statements = 0;

  const mention = (n: string) => {
    if (!seenNodes.has(n)) {
      seenNodes.add(n);
      nodes.push(n);
    }
  };

  lines.forEach((lineText, index) => {
    const line = index + 1;
    function fail(column: number, what: string, Kind: typeof InputError = InputError): never {
      throw sourceError(Kind, file, lines, line, column, what);
    }
    const tokens = new LineTokenizer(lineText, fail).tokens();
    if (tokens.length === 0) return;
    statements++;
    let k = 0;
    const peek = (): Token | undefined => tokens[k];
    const endColumn = (): number => {
      const last = tokens[tokens.length - 1]!;
      return last.end;
    };

    // keyword statement: bare word followed by ':'
    const first = tokens[0]!;
    if (first.kind === "name" && !first.quoted && tokens[1]?.kind === ":") {
      const word = first.value.toLowerCase();
      if (!(KEYWORDS as readonly string[]).includes(word)) {
        fail(
          first.col,
          `unknown keyword "${first.value}:"; the keywords are ${KEYWORD_LIST} ` +
            `(put a node name that contains ':' in double quotes)`,
        );
      }
      const keyword = word as (typeof KEYWORDS)[number];
      k = 2;
      const names: Array<Extract<Token, { kind: "name" }>> = [];
      for (;;) {
        const t = peek();
        if (t?.kind !== "name") {
          if (names.length === 0) {
            fail(
              t?.col ?? tokens[1]!.end,
              `expected a node name after "${first.value}:"; ${KEYWORD_EXAMPLE[keyword]}`,
            );
          }
          fail(t?.col ?? endColumn(), `expected a node name after ','; add a name or remove the trailing comma`);
        }
        names.push(t);
        k++;
        const sep = peek();
        if (sep === undefined) break;
        if (sep.kind !== ",") {
          fail(
            sep.col,
            `expected ',' or the end of the line in the "${first.value}:" list; ` +
              `separate names with commas and write arrows on their own lines`,
          );
        }
        k++;
      }
      if (keyword === "period") periods.push([]);
      for (const n of names) {
        mention(n.value);
        if (keyword === "period") {
          const seen = periodSite.get(n.value);
          if (seen !== undefined && seen.period !== periods.length) {
            fail(
              n.col,
              `${displayName(n.value)} is already in period ${seen.period} (line ${seen.line}); a variable belongs to one period, so remove it from one of the two lines`,
              GraphError,
            );
          }
          if (seen !== undefined) {
            repeats.repeat(`p:${n.value}`, (times) => `${displayName(n.value)} is listed in period ${seen.period} ${times}`, formatSourceLocation(file, line), seen.line, line);
          } else {
            periodSite.set(n.value, { period: periods.length, line });
            periods[periods.length - 1]!.push(n.value);
          }
          continue;
        }
        const lineOf = keyword === "fixed" ? fixedLine : unmeasuredLine;
        const prev = lineOf.get(n.value);
        if (prev !== undefined) {
          repeats.repeat(`${keyword[0]}:${n.value}`, (times) => `${displayName(n.value)} is declared ${keyword} ${times}`, formatSourceLocation(file, line), prev, line);
        } else {
          lineOf.set(n.value, line);
          (keyword === "fixed" ? fixed : unmeasured).push(n.value);
        }
      }
      return;
    }

    // chain: list { op list }
    const readList = (after: Token | undefined): Array<Extract<Token, { kind: "name" }>> => {
      const names: Array<Extract<Token, { kind: "name" }>> = [];
      let prev = after;
      for (;;) {
        const t = peek();
        if (t?.kind !== "name") {
          const col = t?.col ?? (prev ? prev.end : 1);
          if (prev === undefined) {
            if (t?.kind === "->" || t?.kind === "<->") {
              fail(col, `expected a node name before '${t.kind}'; write the name of the ${t.kind === "->" ? "cause" : "first variable"} first`);
            }
            fail(col, `expected a node name at the start of the statement; remove the stray '${t?.kind}'`);
          }
          if (prev.kind === "->") {
            fail(col, `expected a node name after '->'; write the name of the caused variable, or remove the arrow`);
          }
          if (prev.kind === "<->") {
            fail(col, `expected a node name after '<->'; write the name of the other variable, or remove '<->'`);
          }
          fail(col, `expected a node name after ','; add a name or remove the trailing comma`);
        }
        names.push(t);
        k++;
        if (peek()?.kind !== ",") return names;
        prev = peek();
        k++;
      }
    };

    let left = readList(undefined);
    for (const n of left) mention(n.value);
    for (;;) {
      const op = peek();
      if (op === undefined) break;
      if (op.kind === "<-") {
        k++;
        let suggestion = "";
        try {
          const right = readList(op);
          suggestion = `: ${right.map((n) => displayName(n.value)).join(", ")} -> ${left.map((n) => displayName(n.value)).join(", ")}`;
        } catch {
          suggestion = "";
        }
        fail(op.col, `reversed arrow '<-' is not supported; write the cause first with '->'${suggestion}`);
      }
      if (op.kind === "name") {
        const prev = left[left.length - 1]!;
        fail(
          op.col,
          `expected '->', '<->' or ',' before ${displayName(op.value)}; ` +
            `put a name with spaces in double quotes, e.g. "${prev.value} ${op.value}"`,
        );
      }
      if (op.kind === ":") {
        fail(
          op.col,
          `unexpected ':'; the keywords ${KEYWORD_LIST} go at the start of a line, ` +
            `and a node name that contains ':' goes in double quotes`,
        );
      }
      if (op.kind === ",") throw new Error("unreachable: lists consume commas");
      k++;
      const right = readList(op);
      for (const n of right) mention(n.value);
      for (const a of left) {
        for (const b of right) {
          if (op.kind === "->") {
            if (a.value === b.value) {
              fail(
                op.col,
                `self-arrow ${displayName(a.value)} -> ${displayName(a.value)}: a variable cannot cause itself; remove ${displayName(a.value)} from one side of the arrow`,
                GraphError,
              );
            }
            const key = JSON.stringify([a.value, b.value]);
            const prev = arrowLine.get(key);
            if (prev !== undefined) {
              repeats.repeat(`a:${key}`, (times) => `arrow ${displayName(a.value)} -> ${displayName(b.value)} is declared ${times}`, formatSourceLocation(file, line), prev, line);
            } else {
              arrowLine.set(key, line);
              arrows.push([a.value, b.value]);
              sites.push({ from: a.value, to: b.value, line, column: op.col });
            }
          } else {
            if (a.value === b.value) {
              fail(
                op.col,
                `${displayName(a.value)} <-> ${displayName(a.value)} joins a variable to itself; ` +
                  `a shared unmeasured cause needs two different variables, so remove it`,
                GraphError,
              );
            }
            const key = JSON.stringify(a.value < b.value ? [a.value, b.value] : [b.value, a.value]);
            const prev = biLine.get(key);
            if (prev !== undefined) {
              repeats.repeat(`b:${key}`, (times) => `shared cause ${displayName(a.value)} <-> ${displayName(b.value)} is declared ${times}`, formatSourceLocation(file, line), prev, line);
            } else {
              biLine.set(key, line);
              bidirected.push([a.value, b.value]);
              biSites.push({ from: a.value, to: b.value, line, column: op.col });
            }
          }
        }
      }
      left = right;
    }
  });

  if (statements === 0) {
    throw new GraphError(
      `${file ? file + ": " : ""}the graph is empty (no statements, only blank lines or comments); ` +
        `write at least one arrow such as "exposure -> outcome" or one node name`,
      { file },
    );
  }
  checkTimeOrderSites(createTimeOrder(periods, fixed), sites, biSites, file, lines);
  const graph = createGraphWithSites({ nodes, arrows, bidirected, unmeasured, periods, fixed }, sites, file, lines);
  return { graph, warnings };
}

/**
 * Stop at the first declared arrow (then shared cause) that breaks the time order, with its line,
 * column and a caret. Cost: O(E).
 * @throws GraphError positioned at the arrow, naming the periods or the fixed node.
 * @example checkTimeOrderSites(createTimeOrder([["a"], ["b"]]), [{ from: "b", to: "a", line: 3, column: 3 }], [], "g.txt", lines)
 */
export function checkTimeOrderSites(
  order: TimeOrder | undefined,
  sites: readonly ArrowSite[],
  biSites: readonly ArrowSite[],
  file: string | undefined,
  lines: readonly string[],
): void {
  if (!order) return;
  for (const [kind, list] of [["->", sites], ["<->", biSites]] as const) {
    for (const s of list) {
      const why = kind === "->" ? arrowAgainstTime(order, s.from, s.to) : sharedCauseAgainstTime(order, s.from, s.to);
      if (why) throw sourceError(GraphError, file, lines, s.line, s.column, timeOrderMessage({ kind, from: s.from, to: s.to, why }, displayName));
    }
  }
}
