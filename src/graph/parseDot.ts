/**
 * The Graphviz DOT language, read for the structure of a causal DAG.
 *
 * Terms (from the DOT language definition, Graphviz documentation, "The DOT Language",
 * https://graphviz.org/doc/info/lang.html):
 * - *ID*: a bare word (letters, `_`, digits, not starting with a digit; any non-ASCII letter),
 *   a numeral (`-?(.[0-9]+ | [0-9]+(.[0-9]*)?)`), a double-quoted string in which `\"` is the
 *   only escape (other backslashes stay as written; a backslash before a line end joins lines;
 *   `"a" + "b"` concatenates), or an *HTML string* `<...>` whose angle brackets nest in pairs
 *   (its ID is the text between the outer brackets; quotes, comments and line ends inside are
 *   part of it).
 * - *edge statement*: operands joined by `->`; an operand is a node ID (an optional port
 *   `:port[:compass]` or `:compass` is ignored) or a subgraph `{ ... }` / `subgraph [name] { ... }`,
 *   which stands for every node mentioned inside its braces. Every node of one operand gets an
 *   arrow to every node of the next.
 * - *attribute list*: `[key=value, key=value; key]`, repeatable (`[a=b][c=d]`); items are
 *   separated by `,`, `;` or nothing; a key alone (from the earlier published grammar,
 *   `a_list : ID [ '=' ID ]`) means key=true. The node attribute `unmeasured=true` marks a node
 *   that is not a column of the data, `period=N` (a whole number from 1, earliest) puts it in a
 *   period of the time order and `fixed=true` says nothing can cause it (see `timeOrder.ts`);
 *   all other attributes, and `graph/node/edge [...]` and
 *   `key=value` statements, are read and ignored (a few that would change the meaning draw a
 *   warning).
 *
 * The parser keeps its own stack of open subgraphs (no recursion), so nesting depth is limited
 * only by memory. Not read, with a clear error: undirected graphs (`graph { }`, `--`), an HTML
 * string as a node name (node names must match data columns: quote them), more than one graph
 * per file. Comments: `//` and `/* *\/`, and lines that start with `#`.
 */
import { GraphError, InputError } from "../errors.js";
import { duplicateWarnings } from "./duplicateWarnings.js";
import { createTimeOrder } from "./timeOrder.js";

/** Largest period number a DOT node may carry (periods are numbered from 1, earliest). */
export const MAX_PERIOD = 10_000;
import {
  type ArrowSite,
  type ParsedGraph,
  checkTimeOrderSites,
  createGraphWithSites,
  displayName,
  formatSourceLocation,
  sourceError,
  splitSourceLines,
} from "./parseGraph.js";

export interface ParseDotOptions {
  /** File name used in messages; omitted, messages say `line 3, column 7`. */
  file?: string;
}

type Tok =
  | { kind: "id"; value: string; quoted: boolean; html?: boolean; keyword?: Keyword; line: number; col: number }
  | { kind: "{" | "}" | "[" | "]" | ";" | "," | "=" | ":" | "->" | "--" | "eof"; line: number; col: number };

type Keyword = "strict" | "graph" | "digraph" | "subgraph" | "node" | "edge";
const KEYWORDS = new Set<string>(["strict", "graph", "digraph", "subgraph", "node", "edge"]);
const ASCII_ID_CHAR = /[A-Za-z0-9_]/u;
const LOOKALIKE_ARROWS = new Set(["\u2192", "\u27F6", "\u21D2", "\u2194", "\u27F7", "\u21D4"]);

function isIdChar(ch: string): boolean {
  if (ASCII_ID_CHAR.test(ch)) return true;
  return ch.codePointAt(0)! >= 0x80 && !/\s/u.test(ch) && !LOOKALIKE_ARROWS.has(ch);
}

/** Split DOT text into tokens, tracking 1-based line and code-point column. */
function tokenize(text: string, fail: (line: number, col: number, what: string) => never): Tok[] {
  const c = Array.from(text.replace(/^\uFEFF/u, ""));
  const out: Tok[] = [];
  let i = 0;
  let line = 1;
  let col = 1;
  let lineStart = true; // only whitespace so far on this line
  const advance = (n = 1) => {
    for (let k = 0; k < n && i < c.length; k++) {
      const ch = c[i]!;
      i++;
      if (ch === "\n" || (ch === "\r" && c[i] !== "\n")) {
        line++;
        col = 1;
        lineStart = true;
      } else if (ch !== "\r") {
        col++;
      }
    }
  };
  while (i < c.length) {
    const ch = c[i]!;
    if (/\s/u.test(ch)) {
      advance();
      continue;
    }
    const l = line;
    const k = col;
    if (ch === "#" && lineStart) {
      while (i < c.length && c[i] !== "\n" && c[i] !== "\r") advance();
      continue;
    }
    lineStart = false;
    if (ch === "/" && c[i + 1] === "/") {
      while (i < c.length && c[i] !== "\n" && c[i] !== "\r") advance();
      continue;
    }
    if (ch === "/" && c[i + 1] === "*") {
      advance(2);
      while (i < c.length && !(c[i] === "*" && c[i + 1] === "/")) advance();
      if (i >= c.length) fail(l, k, "unterminated comment '/*'; close it with '*/'");
      advance(2);
      continue;
    }
    if (ch === "-" && (c[i + 1] === ">" || c[i + 1] === "-")) {
      out.push({ kind: c[i + 1] === ">" ? "->" : "--", line: l, col: k });
      advance(2);
      continue;
    }
    if ("{}[];,=:".includes(ch)) {
      out.push({ kind: ch as "{", line: l, col: k });
      advance();
      continue;
    }
    if (ch === '"') {
      let value = "";
      advance();
      for (;;) {
        if (i >= c.length) fail(l, k, `unterminated quoted ID; add the closing '"'`);
        const q = c[i]!;
        if (q === '"') break;
        if (q === "\\" && c[i + 1] === '"') {
          value += '"';
          advance(2);
        } else if (q === "\\" && (c[i + 1] === "\n" || c[i + 1] === "\r")) {
          advance(c[i + 1] === "\r" && c[i + 2] === "\n" ? 3 : 2);
        } else {
          value += q;
          advance();
        }
      }
      advance();
      const prev = out[out.length - 1];
      const before = out[out.length - 2];
      if (prev?.kind === "id" && prev.value === "+" && !prev.quoted && before?.kind === "id" && before.quoted && !before.html) {
        out.pop();
        before.value += value;
      } else {
        out.push({ kind: "id", value, quoted: true, line: l, col: k });
      }
      continue;
    }
    if (ch === "+") {
      // only meaningful between two quoted strings; kept as a marker token
      const prev = out[out.length - 1];
      if (prev?.kind !== "id" || !prev.quoted || prev.html) fail(l, k, "unexpected '+'; '+' may only join two quoted strings");
      out.push({ kind: "id", value: "+", quoted: false, line: l, col: k });
      advance();
      continue;
    }
    if (ch === "<") {
      // an HTML string: angle brackets nest in pairs; everything between the outer ones is the ID
      let depth = 0;
      let value = "";
      for (;;) {
        if (i >= c.length) fail(l, k, "unterminated HTML-like ID '<'; angle brackets inside it must come in pairs, so add the closing '>'");
        const h = c[i]!;
        if (h === "<") depth++;
        else if (h === ">") depth--;
        if (depth === 0) break;
        if (depth > 1 || h !== "<") value += h;
        advance();
      }
      advance();
      out.push({ kind: "id", value, quoted: true, html: true, line: l, col: k });
      continue;
    }
    if (/[0-9.]/u.test(ch) || (ch === "-" && /[0-9.]/u.test(c[i + 1] ?? ""))) {
      let j = i + 1;
      while (j < c.length && /[0-9.]/u.test(c[j]!)) j++;
      const num = c.slice(i, j).join("");
      if (j < c.length && isIdChar(c[j]!)) {
        let e = j;
        while (e < c.length && isIdChar(c[e]!)) e++;
        const whole = c.slice(i, e).join("");
        fail(l, k, `bare name ${whole} starts with a digit; put it in double quotes: "${whole}"`);
      }
      if (!/^-?(\.[0-9]+|[0-9]+(\.[0-9]*)?)$/u.test(num)) {
        fail(l, k, `malformed number '${num}'; put the name in double quotes: "${num}"`);
      }
      out.push({ kind: "id", value: num, quoted: false, line: l, col: k });
      advance(j - i);
      continue;
    }
    if (isIdChar(ch)) {
      let j = i;
      while (j < c.length && isIdChar(c[j]!)) j++;
      const value = c.slice(i, j).join("");
      const lower = value.toLowerCase();
      const tok: Tok = { kind: "id", value, quoted: false, line: l, col: k };
      if (KEYWORDS.has(lower)) tok.keyword = lower as Keyword;
      out.push(tok);
      advance(j - i);
      continue;
    }
    if (LOOKALIKE_ARROWS.has(ch)) fail(l, k, `unexpected character '${ch}'; write '->' with plain keyboard characters`);
    fail(l, k, `unexpected character '${ch}'; put a name like this in double quotes, e.g. "a${ch}b"`);
  }
  const last = out[out.length - 1];
  if (last?.kind === "id" && last.value === "+" && !last.quoted) fail(last.line, last.col, "'+' must be followed by a quoted string");
  out.push({ kind: "eof", line, col });
  return out;
}

const describe = (t: Tok): string =>
  t.kind === "eof" ? "the end of the file" : t.kind === "id" ? (t.html ? `<${t.value}>` : t.quoted ? `"${t.value}"` : `'${t.value}'`) : `'${t.kind}'`;

type IdTok = Extract<Tok, { kind: "id" }>;

/** One attribute of a list: its key, and its value token (undefined for a key written alone, which means key=true). */
interface Attribute {
  key: string;
  keyTok: IdTok;
  value: IdTok | undefined;
}

/** An open subgraph (or the graph's own braces): its '{' and the nodes mentioned inside it so far. */
interface Scope {
  open: Tok;
  list: string[];
  set: Set<string>;
  /** The statement of the enclosing scope this subgraph is an operand of, resumed when it closes. */
  resume: Statement | undefined;
}

/** A node or edge statement being read: its operands so far and the arrow waiting for its right operand. */
interface Statement {
  /** The first operand was a node ID (a node statement unless an arrow follows). */
  startsWithNode: boolean;
  left: string[];
  pending: Tok | undefined;
  steps: Array<{ op: Tok; left: string[]; right: string[] }>;
}

/**
 * Parse a directed graph written in the Graphviz DOT language into a validated causal graph.
 * See the module comment for what is read; docs/graph-format.md has examples. Subgraphs nest to
 * any depth (an explicit stack, no recursion).
 *
 * Cost: O(n + E log V) for n characters, E arrows (an edge between two subgraphs contributes
 * |left|·|right| arrows) and V nodes.
 * Source: Graphviz documentation, "The DOT Language", https://graphviz.org/doc/info/lang.html
 * (grammar of graphs, statements, attribute lists, edge operands, ports and IDs).
 *
 * @throws InputError for a syntax error or an undirected graph, message
 *   `file:line:column: what; what to do` followed by the line and a caret.
 * @throws GraphError for a self-arrow (with its position) or a digraph without nodes.
 * @throws CycleError naming one directed cycle, positioned at the arrow of the cycle declared last.
 * @example
 * const { graph } = parseDot('digraph { age -> {sbp smoking} -> stroke; u [unmeasured=true, label=<<b>U</b>>]; u -> sbp }');
 * graph.parents("stroke"); // ["sbp", "smoking"]
 * graph.isMeasured("u"); // false
 */
export function parseDot(text: string, options: ParseDotOptions = {}): ParsedGraph {
  const file = options.file;
  const lines = splitSourceLines(text);
  const fail = (line: number, col: number, what: string, Kind: typeof InputError = InputError): never => {
    throw sourceError(Kind, file, lines, line, col, what);
  };
  const failAt = (t: Tok, what: string, Kind: typeof InputError = InputError): never => fail(t.line, t.col, what, Kind);
  const toks = tokenize(text, fail);
  let p = 0;
  const peek = (o = 0): Tok => toks[Math.min(p + o, toks.length - 1)]!;
  const next = (): Tok => toks[Math.min(p++, toks.length - 1)]!;

  const warnings: string[] = [];
  const repeats = duplicateWarnings(warnings);
  const nodes: string[] = [];
  const seen = new Set<string>();
  const arrows: Array<readonly [string, string]> = [];
  const arrowLine = new Map<string, number>();
  const sites: ArrowSite[] = [];
  const unmeasured = new Map<string, boolean>();
  const periodOf = new Map<string, number>();
  const fixedNodes = new Map<string, boolean>();
  let strict = false;

  const isMarker = (t: Tok): boolean => t.kind === "id" && t.value === "+" && !t.quoted;
  const isPlainId = (t: Tok): t is IdTok => t.kind === "id" && t.keyword === undefined && !isMarker(t);

  const expectId = (what: string): IdTok => {
    const t = next();
    if (t.kind === "id" && !isMarker(t)) return t;
    return failAt(t, `expected ${what} but found ${describe(t)}`);
  };

  /** `[k=v, k2=v2; k3]` repeated (attr_list); a key alone has no value token. */
  const readAttrLists = (): Attribute[] => {
    const out: Attribute[] = [];
    while (peek().kind === "[") {
      const open = next();
      while (peek().kind !== "]") {
        const k = peek().kind;
        if (k === "eof" || k === "}" || k === "{" || k === "[" || k === "->" || k === "--") {
          failAt(open, "unclosed '['; close the attribute list with ']'");
        }
        if (k === "," || k === ";") {
          next();
          continue;
        }
        const key = expectId("an attribute name such as unmeasured");
        let value: IdTok | undefined;
        if (peek().kind === "=") {
          next();
          const v = peek();
          if (v.kind !== "id" || isMarker(v)) failAt(v, `expected a value for attribute ${key.value} but found ${describe(v)}; write ${key.value}=value, or leave the attribute out`);
          value = expectId(`a value for attribute ${key.value}`);
        }
        out.push({ key: key.value, keyTok: key, value });
      }
      next();
    }
    return out;
  };

  /** A yes/no node attribute (`unmeasured`, `fixed`): a key alone, true/yes/1 or false/no/0. */
  const readYesNo = (a: Attribute, key: string): boolean => {
    if (a.value === undefined) return true;
    const v = a.value.value.toLowerCase();
    if (v === "true" || v === "yes" || v === "1") return true;
    if (v === "false" || v === "no" || v === "0") return false;
    return failAt(a.value, `${key}=${a.value.quoted ? describe(a.value) : a.value.value} is not a yes/no value; write ${key}=true or ${key}=false`);
  };

  const readPeriod = (a: Attribute): number => {
    const text = a.value?.value ?? "";
    const v = /^[0-9]+$/u.test(text) ? Number(text) : NaN;
    if (!(Number.isInteger(v) && v >= 1 && v <= MAX_PERIOD)) {
      return failAt(a.value ?? a.keyTok, `period=${text === "" ? "(nothing)" : text} is not a period number; write a whole number from 1 (the earliest period) to ${MAX_PERIOD}, e.g. period=2`);
    }
    return v;
  };

  const valueText = (a: Attribute): string => a.value?.value ?? "true";
  const lineOf = (a: Attribute): number => (a.value ?? a.keyTok).line;

  const warnAttrs = (attrs: readonly Attribute[], target: "edge" | "graph") => {
    for (const a of attrs) {
      const k = a.key.toLowerCase();
      if (k === "unmeasured") {
        warnings.push(
          `${formatSourceLocation(file, lineOf(a))}: unmeasured=${valueText(a)} on ${target === "edge" ? "an edge" : "a graph"} is ignored; ` +
            `set it on each unmeasured node, e.g. u [unmeasured=true]`,
        );
      }
      if (target === "edge" && k === "dir" && valueText(a).toLowerCase() !== "forward") {
        warnings.push(
          `${formatSourceLocation(file, lineOf(a))}: dir=${valueText(a)} is ignored; every edge is read as cause -> effect ` +
            `in the order written, so write the arrow that way round`,
        );
      }
    }
  };

  /** A node ID with an optional port `:port[:compass]` (or `:compass`), which is ignored. */
  const readNodeId = (): string => {
    const t = expectId("a node name");
    if (t.html) failAt(t, `HTML-like IDs '<...>' are read as attribute values, not as node names: a node name must match a data column, so write it in double quotes instead`);
    if (t.keyword !== undefined && !t.quoted) failAt(t, `'${t.value}' is a DOT keyword; to use it as a node name, put it in double quotes`);
    if (t.value.trim() === "") failAt(t, "empty node name; write a name between the quotes");
    if (peek().kind === ":") {
      next();
      expectId("a port name after ':'");
      if (peek().kind === ":") {
        next();
        expectId("a compass point after ':'");
      }
    }
    return t.value;
  };

  // The open scopes, innermost last: the graph's braces first, then nested subgraphs. A node is
  // recorded in the innermost scope; a closing scope passes its nodes on to the one around it.
  const scopes: Scope[] = [];
  const mention = (n: string) => {
    if (!seen.has(n)) {
      seen.add(n);
      nodes.push(n);
    }
    const s = scopes[scopes.length - 1]!;
    if (!s.set.has(n)) {
      s.set.add(n);
      s.list.push(n);
    }
  };

  /** Open a subgraph (`{` or `subgraph [id] {`) as an operand of `resume` (or as a statement of its own). */
  const openSubgraph = (resume: Statement | undefined): void => {
    const start = peek();
    if (start.kind === "id" && start.keyword === "subgraph") {
      next();
      if (isPlainId(peek())) next();
    }
    const open = next();
    if (open.kind !== "{") failAt(open, `expected '{' to open the subgraph but found ${describe(open)}`);
    scopes.push({ open, list: [], set: new Set(), resume });
  };

  /** An operand is complete: the first of its statement, or the right side of the pending arrow. */
  const operandDone = (stmt: Statement, operand: string[]): void => {
    if (stmt.pending) stmt.steps.push({ op: stmt.pending, left: stmt.left, right: operand });
    stmt.pending = undefined;
    stmt.left = operand;
  };

  /** The end of a node or edge statement: its attribute lists, then its arrows. */
  const finishStatement = (stmt: Statement): void => {
    if (stmt.steps.length === 0) {
      if (stmt.startsWithNode) {
        for (const a of readAttrLists()) {
          const key = a.key.toLowerCase();
          if (key === "unmeasured") unmeasured.set(stmt.left[0]!, readYesNo(a, "unmeasured"));
          else if (key === "fixed") fixedNodes.set(stmt.left[0]!, readYesNo(a, "fixed"));
          else if (key === "period") periodOf.set(stmt.left[0]!, readPeriod(a));
        }
      }
      return;
    }
    warnAttrs(readAttrLists(), "edge");
    for (const { op, left: ls, right: rs } of stmt.steps) {
      for (const a of ls) {
        for (const b of rs) {
          if (a === b) {
            failAt(op, `self-arrow ${displayName(a)} -> ${displayName(a)}: a variable cannot cause itself; remove this arrow`, GraphError);
          }
          const key = JSON.stringify([a, b]);
          const prev = arrowLine.get(key);
          if (prev !== undefined) {
            if (!strict) {
              repeats.repeat(key, (times) => `arrow ${displayName(a)} -> ${displayName(b)} is declared ${times}`, formatSourceLocation(file, op.line), prev, op.line);
            }
          } else {
            arrowLine.set(key, op.line);
            arrows.push([a, b]);
            sites.push({ from: a, to: b, line: op.line, column: op.col });
          }
        }
      }
    }
  };

  /** A statement that is not a node, edge or subgraph (attr_stmt, `ID = ID`), or the error for a token that starts none. */
  const readOtherStatement = (t: Tok): boolean => {
    if (t.kind === "id" && (t.keyword === "node" || t.keyword === "edge" || t.keyword === "graph") && peek(1).kind === "[") {
      next();
      const attrs = readAttrLists();
      if (t.keyword === "node") {
        for (const a of attrs) {
          const key = a.key.toLowerCase();
          if (key === "unmeasured") {
            warnings.push(
              `${formatSourceLocation(file, lineOf(a))}: node [unmeasured=${valueText(a)}] is ignored; ` +
                `set it on each unmeasured node, e.g. u [unmeasured=true]`,
            );
          } else if (key === "period" || key === "fixed") {
            warnings.push(
              `${formatSourceLocation(file, lineOf(a))}: node [${key}=${valueText(a)}] is ignored; ` +
                `set it on each node, e.g. ${key === "period" ? "age [period=1]" : "sex [fixed=true]"}`,
            );
          }
        }
      } else {
        warnAttrs(attrs, t.keyword);
      }
      return true;
    }
    if (t.kind === "id" && (t.keyword === "graph" || t.keyword === "digraph" || t.keyword === "strict")) {
      failAt(t, `unexpected '${t.value}' inside a graph; a file holds one graph, and a nested group is written 'subgraph name { ... }'`);
    }
    if (t.kind === "id" && t.keyword === undefined && !isMarker(t) && peek(1).kind === "=") {
      next();
      next();
      const v = peek();
      if (v.kind !== "id" || isMarker(v)) failAt(v, `expected a value for ${t.value} but found ${describe(v)}; write ${t.value}=value, or leave the statement out`);
      next();
      if (t.value.toLowerCase() === "unmeasured") warnAttrs([{ key: t.value, keyTok: t, value: v as IdTok }], "graph");
      return true;
    }
    if (t.kind === "--") failAt(t, "'--' is an undirected edge; arrowaudit needs directed arrows, so write '->' from cause to effect");
    if (t.kind === "->") failAt(t, "expected a node name before '->'; write the name of the cause first");
    if (!(t.kind === "{" || t.kind === "id")) {
      failAt(t, `unexpected ${describe(t)}; expected a node, an edge, an attribute or '}'`);
    }
    return false;
  };

  // graph : [strict] (graph | digraph) [ID] '{' stmt_list '}'
  let head = next();
  if (head.kind === "id" && head.keyword === "strict") {
    strict = true;
    head = next();
  }
  if (head.kind === "id" && head.keyword === "graph") {
    failAt(head, "this is an undirected graph; arrowaudit needs a directed graph, so write 'digraph' and use '->' for each arrow");
  }
  if (!(head.kind === "id" && head.keyword === "digraph")) {
    failAt(head, `expected 'digraph' at the start of a DOT file but found ${describe(head)}; write digraph { cause -> effect }`);
  }
  if (isPlainId(peek())) next();
  const open = next();
  if (open.kind !== "{") failAt(open, `expected '{' after 'digraph' but found ${describe(open)}`);
  scopes.push({ open, list: [], set: new Set(), resume: undefined });

  // stmt_list, read with an explicit stack of open subgraphs: `stmt` is the node or edge
  // statement being read in the innermost scope (after one of its operands), if any.
  let stmt: Statement | undefined;
  while (scopes.length > 0) {
    if (stmt) {
      const t = peek();
      if (t.kind !== "->" && t.kind !== "--") {
        finishStatement(stmt);
        stmt = undefined;
        continue;
      }
      const op = next();
      if (op.kind === "--") failAt(op, "'--' is an undirected edge; arrowaudit needs directed arrows, so write '->' from cause to effect");
      const after = peek();
      if (!(after.kind === "{" || after.kind === "id") || (after.kind === "id" && after.keyword !== undefined && after.keyword !== "subgraph" && !after.quoted)) {
        failAt(after, `expected a node name or '{' after '->' but found ${describe(after)}; write the name of the caused variable, or remove the arrow`);
      }
      stmt.pending = op;
      if (after.kind === "{" || (after.kind === "id" && after.keyword === "subgraph")) {
        openSubgraph(stmt);
        stmt = undefined;
      } else {
        const name = readNodeId();
        mention(name);
        operandDone(stmt, [name]);
      }
      continue;
    }
    const t = peek();
    if (t.kind === "}") {
      next();
      const closed = scopes.pop()!;
      const outer = scopes[scopes.length - 1];
      if (outer) {
        for (const n of closed.list) {
          if (!outer.set.has(n)) {
            outer.set.add(n);
            outer.list.push(n);
          }
        }
        stmt = closed.resume;
        if (stmt) operandDone(stmt, closed.list);
        else stmt = { startsWithNode: false, left: closed.list, pending: undefined, steps: [] };
      }
      continue;
    }
    if (t.kind === "eof") failAt(scopes[scopes.length - 1]!.open, `'{' opened here is never closed; add '}' at the end`);
    if (t.kind === ";") {
      next();
      continue;
    }
    if (readOtherStatement(t)) continue;
    if (t.kind === "{" || (t.kind === "id" && t.keyword === "subgraph")) {
      openSubgraph(undefined);
      continue;
    }
    const name = readNodeId();
    mention(name);
    stmt = { startsWithNode: true, left: [name], pending: undefined, steps: [] };
  }
  const tail = peek();
  if (tail.kind !== "eof") {
    failAt(tail, `unexpected ${describe(tail)} after the end of the graph; a file holds one digraph, so remove the rest or merge it into the first`);
  }

  if (nodes.length === 0) {
    throw new GraphError(
      `${file ? file + ": " : ""}the digraph has no nodes; write at least one arrow such as exposure -> outcome`,
      { file },
    );
  }
  const unmeasuredNames = nodes.filter((n) => unmeasured.get(n) === true);
  // periods by number (a gap in the numbers is an empty period, so messages keep the file's numbers)
  const periods: string[][] = [];
  for (const n of nodes) {
    const k = periodOf.get(n);
    if (k === undefined) continue;
    while (periods.length < k) periods.push([]);
    periods[k - 1]!.push(n);
  }
  const fixed = nodes.filter((n) => fixedNodes.get(n) === true);
  checkTimeOrderSites(createTimeOrder(periods, fixed), sites, [], file, lines);
  const graph = createGraphWithSites({ nodes, arrows, unmeasured: unmeasuredNames, periods, fixed }, sites, file, lines);
  return { graph, warnings };
}
