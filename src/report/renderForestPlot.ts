/**
 * Forest plot of the tested claims: one row per claim in rank order, the effect as a point and its
 * 95% confidence interval as a horizontal line, a vertical line at zero (independence), and the
 * relevance band ±min_effect shaded when set. Verdicts differ by shape and colour: contradicted is
 * a vermillion diamond, consistent a blue circle.
 *
 * Terms: *effect* is the claim's effect on the common partial-correlation scale (see
 * `TestOutcome.effect`); the *relevance band* is the interval (−min_effect, min_effect) inside
 * which an association is not called a contradiction however small its p-value.
 */
import type { TestedClaim } from "../audit/types.js";
import { escapeXml } from "./escapeXml.js";
import { independenceSvg } from "./independenceMark.js";
import { claimEffectSymbol, claimLabel, formatEffectWithCI, typographicMinus } from "./format.js";
import { estimateTextWidth } from "./textWidth.js";
import { FONT_STACK, INK, PALETTE } from "./theme.js";

export interface ForestPlotOptions {
  /** Half-width of the relevance band; 0 or absent draws no band. */
  minEffect?: number;
  /** Accessible title. */
  title?: string;
  /** Add the SVG namespace for a standalone file (default false). */
  standalone?: boolean;
  /** Width of the plotting area in px (default 340). */
  plotWidth?: number;
}

const FS = 12.5;
const ROW = 26;
const MAX_LABEL = 400;

function n(v: number): string {
  const r = Math.round(v * 10) / 10;
  return Object.is(r, -0) ? "0" : String(r);
}

/**
 * Nice tick step for a span: the smallest of 0.01, 0.02, 0.025, 0.05, 0.1, 0.2, 0.25, 0.5, 1
 * giving at most eight intervals. Cost: O(1).
 */
function tickStep(span: number): number {
  for (const s of [0.01, 0.02, 0.025, 0.05, 0.1, 0.2, 0.25, 0.5, 1]) if (span / s <= 8) return s;
  return 1;
}

/** Shorten a label to fit `max` px, ending it with an ellipsis. */
function fit(text: string, max: number): string {
  if (estimateTextWidth(text, FS) <= max) return text;
  const chars = [...text];
  while (chars.length > 1 && estimateTextWidth(chars.join("") + "…", FS) > max) chars.pop();
  return chars.join("") + "…";
}

/** Tick label: up to the step's decimals, typographic minus. */
function tickLabel(v: number, step: number): string {
  const d = step >= 1 ? 0 : step >= 0.1 && Math.round(step * 10) === step * 10 ? 1 : 2;
  const s = v.toFixed(d);
  return typographicMinus(/^-0(\.0*)?$/.test(s) ? s.slice(1) : s);
}

/**
 * Render the forest plot of tested claims as SVG: rows ordered by rank, point and 95% CI per
 * claim, zero line, shaded ±minEffect band, axis with ticks, labels "x ⫫ y | a, b" ("| ∅" for
 * the empty set), verdict by shape and colour, and a legend. Every label is XML-escaped; labels
 * longer than 400 px are shortened with "…" (the full label is kept in the row's tooltip).
 * Cost: O(k log k) for k claims.
 *
 * @param claims tested claims (any order; drawn by rank)
 * @param options minEffect band, title, standalone namespace, plot width
 * @returns SVG markup; a short "no claims" figure when `claims` is empty
 * @example renderForestPlot(result.claims, { minEffect: result.settings.min_effect })
 */
export function renderForestPlot(claims: readonly TestedClaim[], options: ForestPlotOptions = {}): string {
  const ns = options.standalone ? ` xmlns="http://www.w3.org/2000/svg"` : "";
  const title = options.title ?? "Forest plot of the tested claims";
  const open = (w: number, h: number) =>
    `<svg${ns} class="forest-plot" viewBox="0 0 ${w} ${h}" width="${w}" height="${h}" role="img" aria-label="${escapeXml(title)}" font-family="${escapeXml(FONT_STACK)}" font-size="${FS}" fill="${INK.text}"><title>${escapeXml(title)}</title>`;
  if (claims.length === 0) {
    return open(360, 40) + `<text x="8" y="24" fill="${INK.muted}">No claims were tested, so there is nothing to plot.</text></svg>`;
  }
  const rows = [...claims].sort((a, b) => a.rank - b.rank);
  const minEffect = options.minEffect !== undefined && Number.isFinite(options.minEffect) && options.minEffect > 0 ? options.minEffect : 0;
  const plotW = options.plotWidth ?? 340;

  // domain: zero, every finite CI bound and effect, and the band, clamped to [-1, 1]
  let lo = 0;
  let hi = 0;
  for (const c of rows) for (const v of [c.effect, c.ci[0], c.ci[1]]) if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  lo = Math.max(-1, Math.min(lo, -minEffect));
  hi = Math.min(1, Math.max(hi, minEffect));
  if (hi - lo < 0.1) { lo -= 0.05; hi += 0.05; }
  const step = tickStep(hi - lo);
  lo = Math.max(-1, Math.floor(lo / step - 1e-9) * step);
  hi = Math.min(1, Math.ceil(hi / step + 1e-9) * step);

  const labels = rows.map((c) => claimLabel(c));
  const shown = labels.map((l) => fit(l, MAX_LABEL));
  const rankW = estimateTextWidth(String(rows.length), FS) + 14;
  const labelW = Math.min(MAX_LABEL, Math.max(120, ...shown.map((l) => estimateTextWidth(l, FS)))) + 16;
  const texts = rows.map((c) => typographicMinus(`${claimEffectSymbol(c)} = ${formatEffectWithCI(c.effect, c.ci)}`));
  const textW = Math.max(150, ...texts.map((t) => estimateTextWidth(t, FS))) + 12;

  const left = 8 + rankW + labelW;
  const top = 30;
  const plotH = rows.length * ROW;
  const axisY = top + plotH;
  const width = Math.ceil(left + plotW + 16 + textW + 8);
  const X = (v: number) => left + ((v - lo) / (hi - lo)) * plotW;

  let out = "";
  // header
  out += `<text x="8" y="18" font-weight="600" fill="${INK.muted}">#</text>`;
  out += `<text x="${n(8 + rankW)}" y="18" font-weight="600" fill="${INK.muted}">claim</text>`;
  out += `<text x="${n(left + plotW / 2)}" y="18" text-anchor="middle" font-weight="600" fill="${INK.muted}">effect and 95% CI</text>`;
  out += `<text x="${n(left + plotW + 16)}" y="18" font-weight="600" fill="${INK.muted}">estimate [95% CI]</text>`;
  // zebra rows
  rows.forEach((_, i) => {
    if (i % 2 === 0) out += `<rect x="4" y="${n(top + i * ROW)}" width="${width - 8}" height="${ROW}" fill="${INK.panel}"/>`;
  });
  // band, grid, zero line
  if (minEffect > 0) {
    const a = X(Math.max(lo, -minEffect));
    const b = X(Math.min(hi, minEffect));
    out += `<rect class="min-effect-band" x="${n(a)}" y="${top}" width="${n(b - a)}" height="${plotH}" fill="${PALETTE.sky}" fill-opacity="0.16"/>`;
  }
  const ticks: number[] = [];
  for (let v = lo; v <= hi + 1e-9; v += step) ticks.push(Math.round(v / step) * step);
  for (const t of ticks) {
    out += `<line x1="${n(X(t))}" x2="${n(X(t))}" y1="${top}" y2="${axisY}" stroke="${INK.rule}" stroke-width="1"/>`;
  }
  out += `<line class="zero-line" x1="${n(X(0))}" x2="${n(X(0))}" y1="${top - 4}" y2="${axisY}" stroke="${INK.arrow}" stroke-width="1.3"/>`;
  // rows
  rows.forEach((c, i) => {
    const y = top + i * ROW + ROW / 2;
    const contradicted = c.verdict === "contradicted";
    const color = contradicted ? PALETTE.vermillion : PALETTE.blue;
    let mark = "";
    const [l, u] = c.ci;
    if (Number.isFinite(l) && Number.isFinite(u)) {
      const a = X(Math.max(lo, Math.min(hi, l)));
      const b = X(Math.max(lo, Math.min(hi, u)));
      mark += `<line class="ci" x1="${n(a)}" x2="${n(b)}" y1="${n(y)}" y2="${n(y)}" stroke="${color}" stroke-width="2"/>`;
      mark += `<line x1="${n(a)}" x2="${n(a)}" y1="${n(y - 4)}" y2="${n(y + 4)}" stroke="${color}" stroke-width="1.5"/><line x1="${n(b)}" x2="${n(b)}" y1="${n(y - 4)}" y2="${n(y + 4)}" stroke="${color}" stroke-width="1.5"/>`;
    }
    if (Number.isFinite(c.effect)) {
      const x = X(Math.max(lo, Math.min(hi, c.effect)));
      mark += contradicted
        ? `<path class="point contradicted" d="M${n(x)},${n(y - 7)} L${n(x + 7)},${n(y)} L${n(x)},${n(y + 7)} L${n(x - 7)},${n(y)} z" fill="${color}" stroke="#ffffff" stroke-width="1"/>`
        : `<circle class="point consistent" cx="${n(x)}" cy="${n(y)}" r="4.6" fill="#ffffff" stroke="${color}" stroke-width="2"/>`;
    }
    const weight = contradicted ? ` font-weight="600"` : "";
    out +=
      `<g class="forest-row ${c.verdict}" data-rank="${c.rank}"><title>${escapeXml(`#${c.rank} ${labels[i]}: ${c.verdict}`)}</title>` +
      `<text x="8" y="${n(y)}" dy="0.35em" fill="${INK.muted}">${c.rank}</text>` +
      `<text x="${n(8 + rankW)}" y="${n(y)}" dy="0.35em"${weight}>${independenceSvg(shown[i]!)}</text>` +
      mark +
      `<text x="${n(left + plotW + 16)}" y="${n(y)}" dy="0.35em" fill="${contradicted ? "#8a3a00" : INK.text}"${weight}>${escapeXml(texts[i])}</text></g>`;
  });
  // axis
  out += `<line x1="${n(left)}" x2="${n(left + plotW)}" y1="${axisY}" y2="${axisY}" stroke="${INK.arrow}"/>`;
  for (const t of ticks) {
    out += `<line x1="${n(X(t))}" x2="${n(X(t))}" y1="${axisY}" y2="${axisY + 5}" stroke="${INK.arrow}"/><text class="tick" x="${n(X(t))}" y="${axisY + 18}" text-anchor="middle" font-size="11.5" fill="${INK.muted}">${escapeXml(tickLabel(t, step))}</text>`;
  }
  out += `<text x="${n(left + plotW / 2)}" y="${axisY + 36}" text-anchor="middle" font-size="12" fill="${INK.muted}">effect (partial correlation scale; 0 = independent)</text>`;
  // legend
  const ly = axisY + 60;
  let lx = 8 + rankW;
  const item = (shape: string, text: string) => {
    const s = shape + `<text x="${n(lx + 18)}" y="${ly}" dy="0.35em" font-size="12" fill="${INK.muted}">${escapeXml(text)}</text>`;
    lx += 18 + estimateTextWidth(text, 12) + 24;
    return s;
  };
  let legend = "";
  legend += item(`<path d="M${n(lx + 6)},${ly - 6} L${n(lx + 12)},${ly} L${n(lx + 6)},${ly + 6} L${n(lx)},${ly} z" fill="${PALETTE.vermillion}"/>`, "contradicted");
  legend += item(`<circle cx="${n(lx + 6)}" cy="${ly}" r="4.6" fill="#ffffff" stroke="${PALETTE.blue}" stroke-width="2"/>`, "consistent");
  legend += item(`<line x1="${n(lx - 2)}" x2="${n(lx + 14)}" y1="${ly}" y2="${ly}" stroke="${INK.arrow}" stroke-width="2"/>`, "95% confidence interval");
  if (minEffect > 0) {
    legend += item(
      `<rect x="${n(lx - 2)}" y="${ly - 7}" width="16" height="14" fill="${PALETTE.sky}" fill-opacity="0.25"/>`,
      typographicMinus(`|effect| below the relevance threshold ${minEffect}`),
    );
  }
  out += `<g class="legend">${legend}</g>`;
  const totalW = Math.max(width, Math.ceil(lx));
  return open(totalW, ly + 16) + out + `</svg>`;
}
