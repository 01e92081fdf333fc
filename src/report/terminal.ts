/**
 * Plain-text renderers for the terminal: the claim list of `arrowaudit claims` and the
 * ranked table of `arrowaudit test`. Output fits `width` columns (default 100, what pipes and files
 * get; the CLI passes the terminal's width): a table when its claim column can be at least
 * MIN_CLAIM_COLUMN wide, otherwise one block per claim. Long claim labels spill onto extra lines;
 * a name is shortened in the middle only when it cannot fit a line by itself, one length for the
 * whole output, and never to the same text as another name (full names stay in --json).
 * Every data-derived string is passed through `escapeTerminal` first, so control characters and
 * bidirectional overrides in names, levels or messages are shown, not obeyed. Colour is applied
 * only when the caller asks for it (the CLI asks on a TTY without NO_COLOR).
 */
import type { AuditResult, Claim, TestedClaim, TestName, UntestableClaim } from "../audit/types.js";
import { DEFAULT_MARGIN } from "../audit/equivalence.js";
import { escapeControlCharacters, escapeTerminal } from "./escapeTerminal.js";
import { asciiName, claimLabel, formatCount, formatEffectWithCI, formatLevel, formatP, formatPInline, formatStatistic } from "./format.js";
import { pooledRulesText } from "./pooledRules.js";

export interface TextOptions {
  ascii?: boolean;
  color?: boolean;
  width?: number;
}

/** Width used when none is given: what pipes, files and the golden tests get. */
export const DEFAULT_TEXT_WIDTH = 100;
/** Narrowest claim column of the table; below it each claim becomes a block of lines. */
const MIN_CLAIM_COLUMN = 20;

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

/**
 * Short forms of a set of names, at most `max` characters where possible ({@link middleEllipsis}),
 * such that no two different names get the same short form and no short form equals another
 * name: names whose short forms collide are lengthened one character at a time until every
 * short form is unique (at worst the full names, which differ). Cost: O(m·L²) for m names of at
 * most L characters, in the worst case; usually O(m·L).
 *
 * @example uniqueShortNames(["occupation_region", "occupation_subregion"], 9).get("occupation_region") // "occup…ion", lengthened until the two differ
 */
export function uniqueShortNames(names: Iterable<string>, max: number, ascii = false): Map<string, string> {
  const limit = new Map<string, number>();
  for (const n of names) limit.set(n, Math.max(1, max));
  const short = new Map<string, string>();
  for (const [n, m] of limit) short.set(n, middleEllipsis(n, m, ascii));
  for (;;) {
    const holders = new Map<string, string[]>();
    for (const [n, s] of short) {
      const list = holders.get(s);
      if (list) list.push(n);
      else holders.set(s, [n]);
    }
    let grew = false;
    for (const list of holders.values()) {
      if (list.length < 2) continue;
      for (const n of list) {
        const s = short.get(n)!;
        if (s === n) continue; // already in full: the others must give way
        const m = limit.get(n)! + 1;
        limit.set(n, m);
        short.set(n, middleEllipsis(n, m, ascii));
        grew = true;
      }
    }
    if (!grew) return short;
  }
}

const len = (s: string): number => [...s].length;
const count = (n: number, noun: string): string => `${formatCount(n)} ${noun}${n === 1 ? "" : "s"}`;
const pad = (s: string, w: number): string => s + " ".repeat(Math.max(0, w - len(s)));
const padLeft = (s: string, w: number): string => " ".repeat(Math.max(0, w - len(s))) + s;

function paint(on: boolean | undefined, code: string, s: string): string {
  return on ? `\u001b[${code}m${s}\u001b[0m` : s;
}

/** How names are written in one output: escaped for the terminal, shortened (uniquely), quoted in ASCII. */
interface NameStyle {
  ascii: boolean;
  /** The name as displayed (escaped, shortened, and in ASCII quoted where the notation needs it). */
  show(name: string): string;
}

/**
 * A name style for `names` (raw, unescaped) whose shortened forms fit `max` characters. Unicode:
 * the name escaped for the terminal, then shortened. ASCII: the name shortened, then quoted as the
 * notation requires (a name with a control character is never bare, and inside quotes every
 * backslash is already doubled), then its control characters escaped. Both steps after the
 * shortening are one-to-one, so distinct names stay distinct.
 */
function nameStyle(names: Iterable<string>, max: number, ascii: boolean): NameStyle {
  const raw = new Set(names);
  if (ascii) {
    const short = uniqueShortNames(raw, max, true);
    return { ascii, show: (name) => escapeControlCharacters(asciiName(short.get(name) ?? middleEllipsis(name, max, true))) };
  }
  const escaped = new Map<string, string>();
  for (const n of raw) escaped.set(n, escapeTerminal(n));
  const short = uniqueShortNames(new Set(escaped.values()), max, false);
  const show = (name: string): string => {
    const e = escaped.get(name) ?? escapeTerminal(name);
    return short.get(e) ?? middleEllipsis(e, max, false);
  };
  return { ascii, show };
}

/** The words of a claim label: the pair part and the conditioning-set part, names as `style` shows them. */
function labelParts(c: Pick<Claim, "x" | "y" | "given">, style: NameStyle): { head: string[]; tail: string[] } {
  const sign = style.ascii ? "indep" : "⫫";
  const head = [`${style.show(c.x)} ${sign}`, style.show(c.y)];
  const names = c.given.map((g, i) => style.show(g) + (i < c.given.length - 1 ? "," : ""));
  const tail = [style.ascii ? "given" : "|", ...(names.length ? names : [style.ascii ? "nothing" : "∅"])];
  return { head, tail };
}

/** Greedy fill of `words` into lines of at most `max` characters: the first line starts with `first`, the others with `cont`. */
function fill(words: string[], max: number, first: string, cont: string): string[] {
  const lines: string[] = [];
  let cur = first + words[0]!;
  for (const w of words.slice(1)) {
    if (len(cur) + 1 + len(w) > max) {
      lines.push(cur);
      cur = cont + w;
    } else cur += " " + w;
  }
  lines.push(cur);
  return lines;
}

/**
 * A claim label as lines of at most `max` characters: one line when it fits; else the pair
 * (`x ⫫ y`) on the first line and the conditioning set (`| a, b` or `| ∅`) on the following ones
 * when the pair fits a line; else the words filled line by line. The set is never dropped: an
 * empty one is always written.
 */
function claimLines(c: Pick<Claim, "x" | "y" | "given">, max: number, style: NameStyle): string[] {
  const { head, tail } = labelParts(c, style);
  const one = [...head, ...tail].join(" ");
  if (len(one) <= max) return [one];
  if (len(head.join(" ")) <= max) return [head.join(" "), ...fill(tail, max, "  ", "    ")];
  return fill([...head, ...tail], max, "", "  ");
}

/** Longest name that still fits a continuation line of a claim label `labelWidth` wide (indent, quotes, comma). */
function nameRoom(labelWidth: number): number {
  return Math.max(4, labelWidth - 8);
}

/** The raw names of claims (x, y and the sets). */
function claimNames(claims: readonly Pick<Claim, "x" | "y" | "given">[]): Set<string> {
  const names = new Set<string>();
  for (const c of claims) {
    names.add(c.x);
    names.add(c.y);
    for (const g of c.given) names.add(g);
  }
  return names;
}

/** An untestable pair in one line's words: "x and y" when no set separates them, else its full label. */
function untestableLabel(u: UntestableClaim, style: NameStyle): string {
  if (u.given === undefined) return `${style.show(u.x)} and ${style.show(u.y)}`;
  const { head, tail } = labelParts({ x: u.x, y: u.y, given: u.given }, style);
  return [...head, ...tail].join(" ");
}

export interface ClaimsListing {
  graph: { nodes: string[]; measured: string[]; unmeasured: string[]; arrows: [string, string][]; bidirected?: [string, string][] };
  claims: Claim[];
  untestable: UntestableClaim[];
}

/** The `claims` command's text: a summary line and a numbered list of claims, then untestable pairs. */
export function renderClaimsText(r: ClaimsListing, opts: TextOptions = {}): string {
  const ascii = !!opts.ascii;
  const width = opts.width ?? DEFAULT_TEXT_WIDTH;
  const m = r.graph.measured.length;
  const missing = pairsWithoutEdge(r);
  const lines: string[] = [];
  lines.push(
    `${count(r.graph.nodes.length, "node")} (${m} measured), ${count(r.graph.arrows.length, "arrow")}, ${count(missing, "missing arrow")} among measured nodes: ${count(r.claims.length, "claim")}, ${r.untestable.length} untestable`,
  );
  if (r.claims.length) lines.push("");
  const w = String(r.claims.length).length;
  const labelW = Math.max(12, width - w - 2);
  const style = nameStyle([...claimNames(r.claims), ...r.untestable.flatMap((u) => [u.x, u.y, ...(u.given ?? [])])], nameRoom(labelW), ascii);
  r.claims.forEach((c, i) => {
    const label = claimLines(c, labelW, style);
    lines.push(`${padLeft(String(i + 1), w)}. ${label[0]}`, ...label.slice(1).map((l) => " ".repeat(w + 2) + l));
  });
  if (r.untestable.length) {
    lines.push("", "untestable:");
    for (const u of r.untestable) lines.push(...wrap(`  ${untestableLabel(u, style)}: ${escapeTerminal(u.reason)}`, width, "    "));
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

/** What each adjustment guarantees, for "a rule that …". */
const ADJUSTED: Record<AuditResult["settings"]["adjust"], { name: string; rule: string }> = {
  holm: { name: "Holm-adjusted", rule: "a rule that keeps the chance of any false contradiction (family-wise error rate) at most" },
  bh: { name: "Benjamini-Hochberg-adjusted", rule: "a rule that keeps the expected share of false contradictions among those called (false discovery rate) at most" },
  none: { name: "unadjusted", rule: "with no control of false contradictions across claims; each claim is tested at" },
};

/** The global line's text: Fisher's C, the unadjusted count beside its chance expectation, and the adjusted count with its guarantee. */
function globalText(r: AuditResult, ascii: boolean): string {
  const g = r.global;
  const s = r.settings;
  if (g.k === 0) return "global: no claim was tested, so there is no global test";
  const unadjusted = r.claims.filter((c) => c.p < s.alpha).length;
  const ge = ascii ? ">=" : "≥";
  const floor = s.min_effect > 0 ? `, |effect| ${ge} ${s.min_effect}` : "";
  const adj = ADJUSTED[s.adjust];
  return (
    `global: Fisher's C = ${formatStatistic(g.statistic)} on ${g.df} df, ${formatPInline(g.p)}; ` +
    `${formatCount(unadjusted)} of ${count(g.k, "claim")} ${unadjusted === 1 ? "reaches" : "reach"} unadjusted p < ${s.alpha}, where ${formatStatistic(g.expected_by_chance)} would be expected by chance alone if every claim held; ` +
    `${formatCount(g.contradicted)} ${g.contradicted === 1 ? "is" : "are"} contradicted (${adj.name} p < ${s.alpha}${floor}), ${adj.rule} ${s.alpha}`
  );
}

/**
 * Lines under the table on Monte-Carlo p-values: how many draws they used and their largest
 * standard error, and which claims (by rank) have a verdict the cap on draws left undecided
 * (marked "?" in the table). Empty without Monte-Carlo p-values. Cost: O(claims).
 */
function monteCarloLines(r: AuditResult): string[] {
  const out: string[] = [];
  let count = 0;
  let lo = Infinity;
  let hi = 0;
  let se = 0;
  for (const c of r.claims) {
    if (!c.monte_carlo) continue;
    count++;
    lo = Math.min(lo, c.monte_carlo.draws);
    hi = Math.max(hi, c.monte_carlo.draws);
    se = Math.max(se, c.monte_carlo.se);
  }
  if (count > 0) {
    const draws = lo === hi ? formatCount(lo) : `${formatCount(lo)} to ${formatCount(hi)}`;
    out.push(`Monte-Carlo p-values (+perm, ${count} claim${count === 1 ? "" : "s"}): ${draws} draws, standard error at most ${se.toPrecision(2)}; their 99% intervals are in --json and --csv`);
  }
  const undecided = r.claims.filter((c) => c.p_undecided).map((c) => `#${c.rank}`);
  if (undecided.length > 0) out.push(`? verdict not resolved by the cap on Monte-Carlo draws (undecided, provisional): ${undecided.slice(0, 20).join(", ")}${undecided.length > 20 ? ", …" : ""}; see the warning below`);
  return out;
}

/**
 * The groups line: verdict crossed with the equivalence test (margin ±m), in words a methods
 * section can use; undefined without tested claims.
 */
function groupsText(r: AuditResult): string | undefined {
  const g = r.global.groups;
  if (!g || r.global.k === 0) return undefined;
  const m = r.settings.margin ?? DEFAULT_MARGIN;
  return `equivalence (margin ±${m}, two one-sided tests at ${r.settings.alpha}): ${formatCount(g.contradicted)} contradicted; ${formatCount(g.contradicted_within_margin)} contradicted but within the margin (real but negligible); ${formatCount(g.supported)} supported (equivalent to independence); ${formatCount(g.inconclusive)} inconclusive (neither shown, see "detect." for what each test could see)`;
}

/** Whether a claim's interval and its (adjusted) verdict seem to disagree: an interval excluding 0 beside "consistent", or the reverse. */
function intervalDisagrees(c: TestedClaim): boolean {
  const [lo, hi] = c.ci;
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return false;
  const excludes = lo > 0 || hi < 0;
  return excludes !== (c.verdict === "contradicted");
}

/** Why some intervals and verdicts disagree: the intervals are unadjusted 95% intervals, the verdicts adjusted (and floored). */
function intervalNote(r: AuditResult, disagree: readonly TestedClaim[]): string {
  const s = r.settings;
  const which = disagree.slice(0, 5).map((c) => `#${c.rank}`).join(", ") + (disagree.length > 5 ? ", ..." : "");
  const basis = s.adjust === "none" ? `unadjusted p < ${s.alpha}` : `${s.adjust === "holm" ? "Holm" : "Benjamini-Hochberg"}-adjusted p-values`;
  const floor = s.min_effect > 0 ? ` and the relevance floor ${s.min_effect}` : "";
  return `note: the intervals are unadjusted ${formatLevel(1 - s.alpha)} intervals and the verdicts use ${basis}${floor}, so an interval and its verdict can disagree (${which}); the report also shows each claim's interval at its adjusted level`;
}

/** Escaped copies of the strings of a result that the test text prints (names are escaped by the name style). */
function safeMessages(r: AuditResult): { file: string; warnings: string[]; note?: string; reasons: string[]; arrows: string[][] } {
  return {
    file: escapeTerminal(r.data.file ?? "data"),
    warnings: r.warnings.map((w) => escapeTerminal(w)),
    ...(r.global.note !== undefined ? { note: escapeTerminal(r.global.note) } : {}),
    reasons: r.untestable.map((u) => escapeTerminal(u.reason)),
    arrows: r.claims.map((c) => c.arrows.map((a) => escapeTerminal(a))),
  };
}

/** The `test` command's text: what was read, the ranked claims, untestable pairs, the global line. */
export function renderTestText(r: AuditResult, opts: TextOptions = {}): string {
  const ascii = !!opts.ascii;
  const width = opts.width ?? DEFAULT_TEXT_WIDTH;
  const color = opts.color;
  const safe = safeMessages(r);
  const out: string[] = [];
  const src = r.data.source;
  out.push(
    ...wrap(
      src?.kind === "sites"
        ? `pooled from ${src.sites?.length ?? 0} site summaries (${(src.sites ?? []).map((t) => `${escapeTerminal(t.site)}: ${formatCount(t.n)} rows`).join(", ")}; ${formatCount(src.n)} rows in all), with site as a stratum${r.claims.length ? `: ${pooledRulesText(r.claims)}` : ""}`
        : src
        ? `${safe.file}: ${src.kind === "correlations" ? "correlation" : "covariance"} matrix of ${formatCount(src.n)} complete cases${src.sd_file !== undefined ? ` with the standard deviations of ${escapeTerminal(src.sd_file)}` : ""} (summary statistics: every claim gets the partial-correlation test)`
        : `${safe.file}: ${formatCount(r.data.rows)} rows read, ${formatCount(r.data.rows_used)} used in at least one test; ${r.data.patterns} missing-data pattern${r.data.patterns === 1 ? "" : "s"}`,
      width,
      "  ",
    ),
  );
  const varStyle = nameStyle(r.variables.map((v) => v.name), Math.min(20, width - 10), ascii);
  const vars = r.variables.map((v) => `${varStyle.show(v.name)} (${v.type}${v.type_source === "inferred" ? "*" : ""}${v.missing ? `, ${formatCount(v.missing)} missing` : ""})`);
  out.push(...wrap(`variables: ${vars.join(", ")}`, width, "  "));
  if (r.variables.some((v) => v.type_source === "inferred")) out.push(...wrap(src && src.kind !== "sites" ? "  * assumed continuous (a matrix holds one score per variable); declare categorical ones with --types" : src ? "  * type inferred from the values at the sites; declare it with summarize --types at every site if wrong" : "  * type inferred from the values; declare with --types if wrong", width, "    "));
  out.push("");

  const head = ["#", "claim", "n", "test", `effect [${formatLevel(1 - r.settings.alpha)} CI]`, "detect.", "p", "p adj", "verdict"];
  const cells = r.claims.map((c) => [
    String(c.rank),
    "",
    formatCount(c.n),
    SHORT_TEST[c.test] + (c.p_method === "permutation" ? "+perm" : ""),
    formatEffectWithCI(c.effect, c.ci),
    c.detectable !== undefined ? c.detectable.toFixed(c.detectable < 0.1 ? 3 : 2) : "n/a",
    formatP(c.p),
    formatP(c.p_adjusted),
    c.verdict + (c.p_undecided ? "?" : ""),
  ]);
  // Width of every column but the claim (index 1); the claim gets what is left.
  const colW = head.map((h, i) => Math.max(len(h), ...cells.map((row) => (i === 1 ? 0 : len(row[i]!)))));
  const gaps = 2 * (head.length - 1);
  const others = colW.reduce((a, b, i) => (i === 1 ? a : a + b), 0);
  const claimW = width - gaps - others;
  const names = [...claimNames(r.claims), ...r.untestable.flatMap((u) => [u.x, u.y, ...(u.given ?? [])])];
  if (r.claims.length === 0) out.push("no claim could be tested");
  else if (claimW >= MIN_CLAIM_COLUMN) {
    // the table: long labels spill onto extra lines of the claim column rather than widening it
    const probe = nameStyle(names, nameRoom(claimW), ascii);
    const labelW = Math.min(claimW, Math.max(len(head[1]!), ...r.claims.map((c) => len(claimLines(c, Number.MAX_SAFE_INTEGER, probe)[0]!))));
    const style = nameStyle(names, nameRoom(labelW), ascii);
    const widths = colW.map((w, i) => (i === 1 ? labelW : w));
    const rightAligned = new Set([0, 2, 5, 6, 7]);
    const fmtRow = (row: string[]) => row.map((s, i) => (rightAligned.has(i) ? padLeft(s, widths[i]!) : pad(s, widths[i]!))).join("  ").trimEnd();
    out.push(paint(color, "1", fmtRow(head)));
    const claimIndent = " ".repeat(widths[0]! + 2);
    r.claims.forEach((c, k) => {
      const label = claimLines(c, labelW, style);
      const row = [...cells[k]!];
      row[1] = label[0]!;
      const lines = [fmtRow(row), ...label.slice(1).map((l) => claimIndent + l)];
      if (c.verdict === "contradicted") {
        out.push(...lines.map((l) => paint(color, "1;38;5;166", l)));
        out.push(...wrap(`consider: ${safe.arrows[k]!.join(", ")}`, width - claimIndent.length, "          ").map((l) => claimIndent + l));
      } else out.push(...lines);
    });
  } else {
    // too narrow for a table: one block per claim, the label then its numbers
    const w = String(r.claims.length).length;
    const indent = " ".repeat(w + 2);
    const style = nameStyle(names, nameRoom(width - indent.length), ascii);
    out.push(...wrap(`ranked claims (verdict; effect [${formatLevel(1 - r.settings.alpha)} CI]; detectable; p; adjusted p; n; test):`, width, "  "));
    r.claims.forEach((c, k) => {
      const label = claimLines(c, width - indent.length, style);
      const row = cells[k]!;
      const lines = [padLeft(row[0]!, w) + "  " + label[0]!, ...label.slice(1).map((l) => indent + l)];
      lines.push(...wrap(`${indent}${row[8]}; ${row[4]}; detectable ${row[5]}; p ${row[6]}; p adj ${row[7]}; n ${row[2]}; ${row[3]}`, width, indent));
      if (c.verdict === "contradicted") {
        out.push(...lines.map((l) => paint(color, "1;38;5;166", l)));
        out.push(...wrap(`${indent}consider: ${safe.arrows[k]!.join(", ")}`, width, indent + "  "));
      } else out.push(...lines);
    });
  }
  const monteCarlo = monteCarloLines(r);
  if (monteCarlo.length > 0) out.push(...monteCarlo.flatMap((l) => wrap(l, width, "  ")));
  const disagree = r.claims.filter(intervalDisagrees);
  if (disagree.length > 0) out.push(...wrap(intervalNote(r, disagree), width, "  "));

  if (r.untestable.length) {
    const style = nameStyle(names, nameRoom(Math.min(60, width - 4)), ascii);
    out.push("", `untestable (${r.untestable.length}):`);
    r.untestable.forEach((u, k) => out.push(...wrap(`  ${untestableLabel(u, style)}: ${safe.reasons[k]}`, width, "    ")));
  }
  out.push("");
  out.push(...wrap(globalText(r, ascii), width, "  "));
  const groups = groupsText(r);
  if (groups) out.push(...wrap(groups, width, "  "));
  if (safe.note) out.push(...wrap(`note: ${safe.note}`, width, "  "));
  for (const w of safe.warnings) out.push(...wrap(`warning: ${w}`, width, "  "));
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
