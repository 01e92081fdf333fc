import { planPower, type PowerPlan } from "../../src/audit/planPower.js";
import type { AuditSettings } from "../../src/audit/types.js";
import { parseLevelDeclarations, parseTypeDeclarations } from "../../src/data/readOptions.js";
import { UsageError } from "../../src/errors.js";
import { escapeTerminal } from "../../src/report/escapeTerminal.js";
import { checkInputFile } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import type { Io } from "../io.js";
import { checkClaimCount, MAX_TESTED_CLAIMS } from "../limits.js";
import { loadGraph } from "../loadGraph.js";
import { checkOneStdin, inputName } from "../readStdin.js";
import type { ClaimSets } from "../../src/graph/deriveClaims.js";

/**
 * `arrowaudit power <graph> --n N [--alpha] [--adjust] [--power] [--types …] [--levels …]
 * [--target-effect e] [--json]`: what each claim could detect at a planned n, before any data.
 */
export async function runPower(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  checkOneStdin({ graph: graphPath });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  const graph = await loadGraph(io, graphPath, opts);
  const graphName = inputName(graphPath);
  checkClaimCount(graph, graphName, MAX_TESTED_CLAIMS, "power plans", "plan the part of the graph you are asking about, or declare the nodes you will not test unmeasured (--unmeasured)");
  const types = typeof opts.types === "string" ? parseTypeDeclarations(opts.types) : {};
  const levels = typeof opts.levels === "string" ? parseLevelDeclarations(opts.levels) : {};
  const unknown = [...Object.keys(types), ...Object.keys(levels)].filter((name) => !graph.hasNode(name));
  if (unknown.length) throw new UsageError(`--types or --levels name ${[...new Set(unknown)].map((n) => `"${n}"`).join(", ")}, not in ${graphName}; check the spelling`);
  const plan = planPower(graph, {
    n: opts.n as number,
    alpha: opts.alpha as number,
    adjust: opts.adjust as AuditSettings["adjust"],
    power: opts.power as number,
    types,
    levels: Object.fromEntries(Object.entries(levels).map(([k, v]) => [k, v.length])),
    ...(opts.targetEffect !== undefined ? { targetEffect: opts.targetEffect as number } : {}),
    sets: opts.sets as ClaimSets,
  });
  if (opts.json) io.stdout(JSON.stringify(plan, null, 2) + "\n");
  else io.stdout(renderPowerText(plan, !!opts.ascii));
  return EXIT.ok;
}

/** The plan as a terminal table: one line per claim, then the untestable pairs and a note on the level. */
export function renderPowerText(plan: PowerPlan, ascii: boolean): string {
  const s = plan.settings;
  const lines = [
    `Power plan for n = ${s.n}: the smallest |effect| each claim's test detects with power ${s.power} at α = ${fmt(s.alpha_per_claim)}${s.adjust === "none" ? "" : ` (α/k: ${s.alpha} over ${plan.claims.length} claims, the floor of ${s.adjust === "holm" ? "Holm" : "Benjamini–Hochberg"})`}.`,
    "",
  ];
  const indep = ascii ? " indep " : " ⫫ ";
  const bar = ascii ? " given " : " | ";
  const empty = ascii ? "nothing" : "∅";
  const rows = plan.claims.map((c) => [escapeTerminal(`${c.x}${indep}${c.y}${bar}${c.given.length ? c.given.join(", ") : empty}`), c.test, String(c.df), c.detectable === null ? "n/a" : c.detectable.toFixed(3), ...(s.target_effect !== null ? [String(c.n_needed)] : [])]);
  const head = ["claim", "test", "df", "detectable", ...(s.target_effect !== null ? [`n for ${s.target_effect}`] : [])];
  const widths = head.map((h, k) => Math.max(h.length, ...rows.map((r) => [...r[k]!].length)));
  const line = (r: string[]) => r.map((v, k) => (k === 0 || k === 1 ? v.padEnd(widths[k]!) : v.padStart(widths[k]!))).join("  ").trimEnd();
  lines.push(line(head), ...rows.map(line));
  if (plan.untestable.length) lines.push("", `${plan.untestable.length} missing arrow${plan.untestable.length === 1 ? " has" : "s have"} no measured separating set and cannot be tested.`);
  lines.push(
    "",
    "A claim whose true effect is below its detectable effect will often look consistent with the data: not being contradicted is not evidence of independence.",
  );
  return lines.join("\n") + "\n";
}

function fmt(a: number): string {
  return a >= 0.001 ? String(Number(a.toPrecision(3))) : a.toExponential(2);
}
