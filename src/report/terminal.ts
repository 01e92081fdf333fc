/**
 * Plain-text renderers for the terminal: the claim list of `arrowaudit claims` and the
 * ranked table of `arrowaudit test`. Tables fit `width` columns (default 100); long names are
 * shortened with an ellipsis in the middle (full names stay in --json). Colour is applied only
 * when the caller asks for it (the CLI asks on a TTY without NO_COLOR).
 */
import type { AuditResult, Claim, TestName, UntestableClaim } from "../audit/types.js";
import { claimLabel, formatCount, formatEffectWithCI, formatP, formatStatistic } from "./format.js";

export interface TextOptions {
  ascii?: boolean;
  color?: boolean;
  width?: number;
}

const SHORT_TEST: Record<TestName, string> = {
  gcm: "GCM",
  "gcm-rank": "GCM-rank",
  "linear-by-linear": "lin×lin",
  "pearson-partial": "pearson",
  "stratified-chisq": "chisq",
  "regression-lr": "reg-LR",
};

/**
 * Shorten `s` to at most `max` characters (code points) by cutting its middle and inserting "…"
 * ("..." in ASCII mode). Cost: O(|s|).
 * @example middleEllipsis("systolic_blood_pressure", 12) // "systol…ssure"
 */
export function middleEllipsis(s: string, max: number, ascii = false): string {
  const cps = [...s];
  if (cps.length <= max) return s;
  const mark = ascii ? "..." : "…";
  const keep = Math.max(1, max - mark.length);
  const head = Math.ceil(keep / 2);
  const tail = keep - head;
  return cps.slice(0, head).join("") + mark + (tail > 0 ? cps.slice(cps.length - tail).join("") : "");
}

const len = (s: string): number => [...s].length;
const count = (n: number, noun: string): string => `${formatCount(n)} ${noun}${n === 1 ? "" : "s"}`;
const pad = (s: string, w: number): string => s + " ".repeat(Math.max(0, w - len(s)));
const padLeft = (s: string, w: number): string => " ".repeat(Math.max(0, w - len(s))) + s;

function paint(on: boolean | undefined, code: string, s: string): string {
  return on ? `\u001b[${code}m${s}\u001b[0m` : s;
}

/**
 * A claim label as lines of at most `max` characters: one line when it fits, else `x ⫫ y` on the
 * first line and the conditioning set on the following ones (names shortened in the middle only
 * when a single name cannot fit).
 */
function claimLines(c: Pick<Claim, "x" | "y" | "given">, max: number, ascii: boolean): string[] {
  const full = claimLabel(c, ascii);
  if (len(full) <= max) return [full];
  const head = fitLabel({ x: c.x, y: c.y, given: [] }, max, ascii).replace(/ \| (∅|\{\})$/, "");
  const lines = [len(head) <= max ? head : middleEllipsis(head, max, ascii)];
  let cur = "  |";
  c.given.forEach((g, i) => {
    const name = middleEllipsis(g, max - 5, ascii) + (i < c.given.length - 1 ? "," : "");
    if (len(cur) + 1 + len(name) > max) {
      lines.push(cur);
      cur = "   ";
    }
    cur += " " + name;
  });
  lines.push(cur);
  return lines;
}

/** A claim label whose names are shortened so the whole label fits `max` characters. */
function fitLabel(c: Pick<Claim, "x" | "y" | "given">, max: number, ascii: boolean): string {
  const full = claimLabel(c, ascii);
  if (len(full) <= max) return full;
  for (let cut = 16; cut >= 4; cut--) {
    const short = claimLabel({ x: middleEllipsis(c.x, cut, ascii), y: middleEllipsis(c.y, cut, ascii), given: c.given.map((g) => middleEllipsis(g, cut, ascii)) }, ascii);
    if (len(short) <= max) return short;
  }
  return middleEllipsis(full, max, ascii);
}

export interface ClaimsListing {
  graph: { nodes: string[]; measured: string[]; unmeasured: string[]; arrows: [string, string][]; bidirected?: [string, string][] };
  claims: Claim[];
  untestable: UntestableClaim[];
}

/** The `claims` command's text: a summary line and a numbered list of claims, then untestable pairs. */
export function renderClaimsText(r: ClaimsListing, opts: TextOptions = {}): string {
  const ascii = !!opts.ascii;
  const width = opts.width ?? 100;
  const m = r.graph.measured.length;
  const missing = pairsWithoutEdge(r);
  const lines: string[] = [];
  lines.push(
    `${count(r.graph.nodes.length, "node")} (${m} measured), ${count(r.graph.arrows.length, "arrow")}, ${count(missing, "missing arrow")} among measured nodes: ${count(r.claims.length, "claim")}, ${r.untestable.length} untestable`,
  );
  if (r.claims.length) lines.push("");
  const w = String(r.claims.length).length;
  r.claims.forEach((c, i) => lines.push(`${padLeft(String(i + 1), w)}. ${fitLabel(c, width - w - 2, ascii)}`));
  if (r.untestable.length) {
    lines.push("", "untestable:");
    for (const u of r.untestable) lines.push(`  ${middleEllipsis(u.x, 24, ascii)} and ${middleEllipsis(u.y, 24, ascii)}: ${u.reason}`);
  }
  return lines.join("\n") + "\n";
}

/** Unordered measured pairs with neither an arrow nor a `<->` between them, plus the `<->` pairs (also missing arrows). */
function pairsWithoutEdge(r: ClaimsListing): number {
  const measured = new Set(r.graph.measured);
  const adj = new Set<string>();
  for (const [a, b] of r.graph.arrows) if (measured.has(a) && measured.has(b)) adj.add(a < b ? `${a}\u0000${b}` : `${b}\u0000${a}`);
  const m = measured.size;
  return (m * (m - 1)) / 2 - adj.size;
}

/** The `test` command's text: what was read, the ranked table, untestable pairs, the global line. */
export function renderTestText(r: AuditResult, opts: TextOptions = {}): string {
  const ascii = !!opts.ascii;
  const width = opts.width ?? 100;
  const color = opts.color;
  const out: string[] = [];
  const file = r.data.file ?? "data";
  out.push(`${file}: ${formatCount(r.data.rows)} rows read, ${formatCount(r.data.rows_used)} used in at least one test; ${r.data.patterns} missing-data pattern${r.data.patterns === 1 ? "" : "s"}`);
  const vars = r.variables.map((v) => `${middleEllipsis(v.name, 20, ascii)} (${v.type}${v.type_source === "inferred" ? "*" : ""}${v.missing ? `, ${formatCount(v.missing)} missing` : ""})`);
  out.push(...wrap(`variables: ${vars.join(", ")}`, width, "  "));
  if (r.variables.some((v) => v.type_source === "inferred")) out.push("  * type inferred from the values; declare with --types if wrong");
  out.push("");

  const head = ["#", "claim", "n", "test", "effect [95% CI]", "p", "p adj", "verdict"];
  const rows = r.claims.map((c) => [
    String(c.rank),
    c,
    formatCount(c.n),
    SHORT_TEST[c.test] + (c.p_method === "permutation" ? "+perm" : ""),
    formatEffectWithCI(c.effect, c.ci),
    formatP(c.p),
    formatP(c.p_adjusted),
    c.verdict,
  ] as const);
  // Width of every column but the claim (index 1), then the claim gets what is left.
  const colW = head.map((h, i) => Math.max(len(h), ...rows.map((row) => (i === 1 ? 0 : len(row[i] as string)))));
  const gaps = 2 * (head.length - 1);
  const others = colW.reduce((a, b, i) => (i === 1 ? a : a + b), 0);
  const claimW = Math.max(12, width - gaps - others);
  const labelW = Math.min(claimW, Math.max(len(head[1]!), ...r.claims.map((c) => len(claimLabel(c, ascii)))));
  // Long names stay readable: the claim column spills onto extra lines (claimLines) rather than widening the table.
  const widths = colW.map((w, i) => (i === 1 ? labelW : w));
  const rightAligned = new Set([0, 2, 5, 6]);
  const fmtRow = (cells: string[]) => cells.map((s, i) => (rightAligned.has(i) ? padLeft(s, widths[i]!) : pad(s, widths[i]!))).join("  ").trimEnd();
  if (rows.length) {
    out.push(paint(color, "1", fmtRow(head)));
    const claimIndent = " ".repeat(widths[0]! + 2);
    for (const row of rows) {
      const c = row[1] as Claim & { verdict: string; arrows: string[] };
      const label = claimLines(c, labelW, ascii);
      const cells = [row[0], label[0]!, row[2], row[3], row[4], row[5], row[6], row[7]] as string[];
      const lines = [fmtRow(cells), ...label.slice(1).map((l) => claimIndent + l)];
      if (c.verdict === "contradicted") {
        out.push(...lines.map((l) => paint(color, "1;38;5;166", l)));
        out.push(...wrap(`consider: ${c.arrows.join(", ")}`, width - claimIndent.length, "          ").map((l) => claimIndent + l));
      } else out.push(...lines);
    }
  } else out.push("no claim could be tested");

  if (r.untestable.length) {
    out.push("", `untestable (${r.untestable.length}):`);
    for (const u of r.untestable) out.push(...wrap(`  ${fitLabel({ x: u.x, y: u.y, given: u.given ?? [] }, 60, ascii).replace(/ \| .*$/, u.given ? " | …" : "")}: ${u.reason}`, width, "    "));
  }
  const g = r.global;
  out.push("");
  out.push(
    ...wrap(
      `global: Fisher's C = ${formatStatistic(g.statistic)} on ${g.df} df, ${g.p < 0.001 ? "p < 0.001" : `p = ${formatP(g.p)}`}; ${g.contradicted} of ${g.k} claims contradicted (${r.settings.adjust === "none" ? "unadjusted" : r.settings.adjust === "holm" ? "Holm-adjusted" : "Benjamini-Hochberg-adjusted"}, alpha = ${r.settings.alpha}${r.settings.min_effect > 0 ? `, |effect| >= ${r.settings.min_effect}` : ""}); about ${formatStatistic(g.expected_by_chance)} would reach unadjusted p < alpha by chance alone`,
      width,
      "  ",
    ),
  );
  if (g.note) out.push(...wrap(`note: ${g.note}`, width, "  "));
  for (const w of r.warnings) out.push(...wrap(`warning: ${w}`, width, "  "));
  out.push(...wrap("Consistency with the data does not prove the graph: other graphs imply the same independencies, and untested claims are not confirmed.", width, ""));
  return out.join("\n") + "\n";
}

/** Greedy word wrap to `width` columns; continuation lines start with `indent`. */
function wrap(text: string, width: number, indent: string): string[] {
  const lead = /^ */.exec(text)![0];
  const words = text.slice(lead.length).split(" ");
  words[0] = lead + words[0];
  const lines: string[] = [];
  let cur = "";
  for (const w of words) {
    if (cur && len(cur) + 1 + len(w) > width) {
      lines.push(cur);
      cur = indent + w;
    } else cur = cur ? `${cur} ${w}` : w;
  }
  if (cur) lines.push(cur);
  return lines;
}
