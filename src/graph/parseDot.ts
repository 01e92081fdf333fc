/**
 * A subset of the Graphviz DOT language, enough to read a causal DAG drawn elsewhere.
 *
 * Terms (from the DOT language definition, Graphviz documentation, "The DOT Language",
 * https://graphviz.org/doc/info/lang.html):
 * - *ID*: a bare word (letters, `_`, digits, not starting with a digit; any non-ASCII letter),
 *   a numeral (`-?(.[0-9]+ | [0-9]+(.[0-9]*)?)`), or a double-quoted string in which `\"` is the
 *   only escape (other backslashes stay as written; a backslash before a line end joins lines;
 *   `"a" + "b"` concatenates). HTML-like `<...>` IDs are not supported.
 * - *edge statement*: operands joined by `->`; an operand is a node ID (an optional `:port`
 *   is ignored) or a subgraph `{ ... }` / `subgraph name { ... }`, which stands for every node
 *   mentioned inside it. Every node of one operand gets an arrow to every node of the next.
 * - *attribute list*: `[key=value, ...]`. The node attribute `unmeasured=true` marks a node that
 *   is not a column of the data; all other attributes, and `graph/node/edge [...]` and `key=value`
 *   statements, are read and ignored (a few that would change the meaning draw a warning).
 *
 * Not supported, with a clear error: undirected graphs (`graph { }`, `--`), HTML-like IDs, more
 * than one graph per file. Comments: `//` and `/* *\/`, and lines that start with `#`.
 */
import { GraphError, InputError } from "../errors.js";
import {
  type ArrowSite,
  type ParsedGraph,
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
  | { kind: "id"; value: string; quoted: boolean; keyword?: Keyword; line: number; col: number }
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
      if (prev?.kind === "id" && prev.value === "+" && before?.kind === "id" && before.quoted) {
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
      if (prev?.kind !== "id" || !prev.quoted) fail(l, k, "unexpected '+'; '+' may only join two quoted strings");
      out.push({ kind: "id", value: "+", quoted: false, line: l, col: k });
      advance();
      continue;
    }
    if (ch === "<") {
      fail(l, k, "HTML-like IDs '<...>' are not supported; write the name in double quotes instead");
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
  t.kind === "eof" ? "the end of the file" : t.kind === "id" ? (t.quoted ? `"${t.value}"` : `'${t.value}'`) : `'${t.kind}'`;

/**
 * Parse a directed graph written in (a subset of) the Graphviz DOT language into a validated
 * causal graph. See the module comment for the subset; docs/graph-format.md has examples.
 *
 * Cost: O(n + E log V) for n characters, E arrows (an edge between two subgraphs contributes
 * |left|·|right| arrows) and V nodes.
 * Source: Graphviz documentation, "The DOT Language", https://graphviz.org/doc/info/lang.html
 * (grammar of graphs, statements, edge operands and IDs).
 *
 * @throws InputError for a syntax error or an undirected graph, message
 *   `file:line:column: what; what to do` followed by the line and a caret.
 * @throws GraphError for a self-arrow (with its position) or a digraph without nodes.
 * @throws CycleError naming one directed cycle, positioned at the arrow of the cycle declared last.
 * @example
 * const { graph } = parseDot('digraph { age -> {sbp smoking} -> stroke; u [unmeasured=true]; u -> sbp }');
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
  const nodes: string[] = [];
  const seen = new Set<string>();
  const arrows: Array<readonly [string, string]> = [];
  const arrowLine = new Map<string, number>();
  const sites: ArrowSite[] = [];
  const unmeasured = new Map<string, boolean>();
  const scopes: Array<{ list: string[]; set: Set<string> }> = [];
  let strict = false;

  const mention = (n: string) => {
    if (!seen.has(n)) {
      seen.add(n);
      nodes.push(n);
    }
    for (const s of scopes) {
      if (!s.set.has(n)) {
        s.set.add(n);
        s.list.push(n);
      }
    }
  };

  const isPlainId = (t: Tok): t is Extract<Tok, { kind: "id" }> => t.kind === "id" && t.keyword === undefined && !(t.value === "+" && !t.quoted);

  const expectId = (what: string): Extract<Tok, { kind: "id" }> => {
    const t = next();
    if (t.kind === "id" && !(t.value === "+" && !t.quoted)) return t;
    return failAt(t, `expected ${what} but found ${describe(t)}`);
  };

  /** `[k=v, ...]` repeated; returns the pairs with the value tokens. */
  const readAttrLists = (): Array<{ key: string; value: Extract<Tok, { kind: "id" }> }> => {
    const out: Array<{ key: string; value: Extract<Tok, { kind: "id" }> }> = [];
    while (peek().kind === "[") {
      const open = next();
      while (peek().kind !== "]") {
        const k = peek().kind;
        if (k === "eof" || k === "}" || k === "{" || k === "[" || k === "->" || k === "--") {
          failAt(open, "unclosed '['; close the attribute list with ']'");
        }
        const key = expectId("an attribute name such as unmeasured");
        const eq = next();
        if (eq.kind !== "=") failAt(eq, `expected '=' after attribute ${key.value} but found ${describe(eq)}; write ${key.value}=value`);
        const value = expectId(`a value for attribute ${key.value}`);
        out.push({ key: key.value, value });
        if (peek().kind === "," || peek().kind === ";") next();
      }
      next();
    }
    return out;
  };

  const readUnmeasured = (value: Extract<Tok, { kind: "id" }>): boolean => {
    const v = value.value.toLowerCase();
    if (v === "true" || v === "yes" || v === "1") return true;
    if (v === "false" || v === "no" || v === "0") return false;
    return failAt(value, `unmeasured=${value.quoted ? `"${value.value}"` : value.value} is not a yes/no value; write unmeasured=true or unmeasured=false`);
  };

  const warnAttrs = (attrs: ReadonlyArray<{ key: string; value: Extract<Tok, { kind: "id" }> }>, target: "edge" | "node" | "graph") => {
    for (const { key, value } of attrs) {
      const k = key.toLowerCase();
      if (target !== "node" && k === "unmeasured") {
        warnings.push(
          `${formatSourceLocation(file, value.line)}: unmeasured=${value.value} on ${target === "edge" ? "an edge" : "a graph"} is ignored; ` +
            `set it on each unmeasured node, e.g. u [unmeasured=true]`,
        );
      }
      if (target === "edge" && k === "dir" && value.value.toLowerCase() !== "forward") {
        warnings.push(
          `${formatSourceLocation(file, value.line)}: dir=${value.value} is ignored; every edge is read as cause -> effect ` +
            `in the order written, so write the arrow that way round`,
        );
      }
    }
  };

  /** An edge operand or a statement-level subgraph: `{...}` or `subgraph [id] {...}`. */
  const readSubgraph = (): string[] => {
    const start = peek();
    if (start.kind === "id" && start.keyword === "subgraph") {
      next();
      if (isPlainId(peek())) next();
    }
    const open = next();
    if (open.kind !== "{") failAt(open, `expected '{' to open the subgraph but found ${describe(open)}`);
    const scope = { list: [] as string[], set: new Set<string>() };
    scopes.push(scope);
    readStatements(open);
    scopes.pop();
    return scope.list;
  };

  /** A node ID with an optional port `:port[:compass]`, which is ignored. */
  const readNodeId = (): string => {
    const t = expectId("a node name");
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

  const readOperand = (): string[] => {
    const t = peek();
    if (t.kind === "{" || (t.kind === "id" && t.keyword === "subgraph")) return readSubgraph();
    const name = readNodeId();
    mention(name);
    return [name];
  };

  const readStatement = () => {
    const t = peek();
    if (t.kind === "id" && (t.keyword === "node" || t.keyword === "edge" || t.keyword === "graph") && peek(1).kind === "[") {
      next();
      const attrs = readAttrLists();
      if (t.keyword === "node") {
        for (const a of attrs) {
          if (a.key.toLowerCase() === "unmeasured") {
            warnings.push(
              `${formatSourceLocation(file, a.value.line)}: node [unmeasured=${a.value.value}] is ignored; ` +
                `set it on each unmeasured node, e.g. u [unmeasured=true]`,
            );
          }
        }
      } else {
        warnAttrs(attrs, t.keyword);
      }
      return;
    }
    if (t.kind === "id" && (t.keyword === "graph" || t.keyword === "digraph" || t.keyword === "strict")) {
      failAt(t, `unexpected '${t.value}' inside a graph; a file holds one graph, and a nested group is written 'subgraph name { ... }'`);
    }
    if (t.kind === "id" && t.keyword === undefined && peek(1).kind === "=") {
      next();
      next();
      expectId(`a value for ${t.value}`);
      return;
    }
    if (t.kind === "--") failAt(t, "'--' is an undirected edge; arrowaudit needs directed arrows, so write '->' from cause to effect");
    if (t.kind === "->") failAt(t, "expected a node name before '->'; write the name of the cause first");
    if (!(t.kind === "{" || t.kind === "id")) {
      failAt(t, `unexpected ${describe(t)}; expected a node, an edge, an attribute or '}'`);
    }
    let left = readOperand();
    if (peek().kind !== "->" && peek().kind !== "--") {
      if (t.kind === "id" && t.keyword === undefined) {
        for (const a of readAttrLists()) {
          if (a.key.toLowerCase() === "unmeasured") unmeasured.set(left[0]!, readUnmeasured(a.value));
        }
      }
      return;
    }
    const steps: Array<{ op: Tok; left: string[]; right: string[] }> = [];
    while (peek().kind === "->" || peek().kind === "--") {
      const op = next();
      if (op.kind === "--") failAt(op, "'--' is an undirected edge; arrowaudit needs directed arrows, so write '->' from cause to effect");
      const after = peek();
      if (!(after.kind === "{" || after.kind === "id") || (after.kind === "id" && after.keyword !== undefined && after.keyword !== "subgraph")) {
        failAt(after, `expected a node name or '{' after '->' but found ${describe(after)}; write the name of the caused variable, or remove the arrow`);
      }
      const right = readOperand();
      steps.push({ op, left, right });
      left = right;
    }
    warnAttrs(readAttrLists(), "edge");
    for (const { op, left: ls, right: rs } of steps) {
      for (const a of ls) {
        for (const b of rs) {
          if (a === b) {
            failAt(op, `self-arrow ${displayName(a)} -> ${displayName(a)}: a variable cannot cause itself; remove this arrow`, GraphError);
          }
          const key = JSON.stringify([a, b]);
          const prev = arrowLine.get(key);
          if (prev !== undefined) {
            if (!strict) {
              warnings.push(
                `${formatSourceLocation(file, op.line)}: arrow ${displayName(a)} -> ${displayName(b)} is declared twice ` +
                  `(first on line ${prev}); the duplicate is ignored`,
              );
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

  function readStatements(open: Tok): void {
    for (;;) {
      const t = peek();
      if (t.kind === "}") {
        next();
        return;
      }
      if (t.kind === "eof") failAt(open, `'{' opened here is never closed; add '}' at the end`);
      if (t.kind === ";") {
        next();
        continue;
      }
      readStatement();
    }
  }

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
  readStatements(open);
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
  const graph = createGraphWithSites({ nodes, arrows, unmeasured: unmeasuredNames }, sites, file, lines);
  return { graph, warnings };
}
