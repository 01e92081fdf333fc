/**
 * Forest plot of the tested claims: one row per claim in rank order, the effect as a point, its
 * unadjusted confidence interval (at 1 − α, 95% by default: every test's interval excludes 0
 * exactly when its unadjusted p < α) as a thick horizontal line and, when the significance level
 * is given, the interval at the level the multiple-testing adjustment used for that claim as a
 * thin line with end ticks (see `adjustedInterval.ts`), a vertical line at zero (independence),
 * and the relevance band ±min_effect shaded when set. Verdicts differ by shape and colour:
 * contradicted is a vermillion diamond, consistent a blue circle. The numbers are written to the
 * right: the estimate with its interval, then the adjusted interval. When some effects are on
 * several degrees of freedom (never negative), the legend says that their lower limit is the
 * one-sided inversion of the test at level α.
 *
 * Terms: *effect* is the claim's effect on the common partial-correlation scale (see
 * `TestOutcome.effect`); the *relevance band* is the interval (−min_effect, min_effect) inside
 * which an association is not called a contradiction however small its p-value.
 *
 * Sizing: every text's width is estimated (`estimateTextWidth`, widened by BOLD for the bold
 * labels of contradicted claims) and the drawing is made as wide as its rightmost text plus a
 * margin, so no label runs past the edge.
 */
import type { AuditSettings, TestedClaim } from "../audit/types.js";
import { adjustedInterval } from "./adjustedInterval.js";
import { escapeXml } from "./escapeXml.js";
import { independenceSvg } from "./independenceMark.js";
import { claimEffectSymbol, claimLabel, formatCI, formatEffectWithCI, formatLevel, typographicMinus } from "./format.js";
import { estimateTextWidth } from "./textWidth.js";
import { FONT_STACK, INK, PALETTE } from "./theme.js";

export interface ForestPlotOptions {
  /** Half-width of the relevance band; 0 or absent draws no band. */
  minEffect?: number;
  /** Significance level of the verdicts; with it, each claim's adjusted interval is drawn too. */
  alpha?: number;
  /** The adjustment the verdicts used (names the adjusted interval in the legend; default "holm"). */
  adjust?: AuditSettings["adjust"];
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
/** Width of bold (font-weight 600) text relative to regular text: a generous bound for sans-serif faces (from memory of Arial/Helvetica Bold advance widths, about 5–10% wider). */
const BOLD = 1.12;
/** Margin kept right of the rightmost text, px. */
const RIGHT_MARGIN = 12;

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

/** Estimated width of `text` at `size` px, bold or not. */
function widthOf(text: string, size: number, bold = false): number {
  return estimateTextWidth(text, size) * (bold ? BOLD : 1);
}

/** Shorten a label to fit `max` px, ending it with an ellipsis. */
function fit(text: string, max: number, bold: boolean): string {
  if (widthOf(text, FS, bold) <= max) return text;
  const chars = [...text];
  while (chars.length > 1 && widthOf(chars.join("") + "…", FS, bold) > max) chars.pop();
  return chars.join("") + "…";
}

/** Tick label: up to the step's decimals, typographic minus. */
function tickLabel(v: number, step: number): string {
  const d = step >= 1 ? 0 : step >= 0.1 && Math.round(step * 10) === step * 10 ? 1 : 2;
  const s = v.toFixed(d);
  return typographicMinus(/^-0(\.0*)?$/.test(s) ? s.slice(1) : s);
}

/** Whether a claim's effect is on several degrees of freedom (unsigned, with a one-sided lower limit). */
function isSeveralDf(c: TestedClaim): boolean {
  if (c.test === "gcm" || c.test === "gcm-rank") return Number(c.details?.components ?? 1) > 1;
  return (c.test === "stratified-chisq" || c.test === "regression-lr") && c.df > 1;
}

/**
 * Render the forest plot of tested claims as SVG: rows ordered by rank, point, unadjusted CI at
 * 1 − alpha (thick) and, with `alpha`, the adjusted interval (thin) per claim, zero line, shaded ±minEffect
 * band, axis with ticks, labels "x ⫫ y | a, b" ("| ∅" for the empty set), the numbers of both
 * intervals, verdict by shape and colour, and a legend saying which interval is which. Every label
 * is XML-escaped; labels longer than 400 px are shortened with "…" (the full label is kept in the
 * row's tooltip); the drawing is as wide as its texts. Cost: O(k log k) for k claims.
 *
 * @param claims tested claims (any order; drawn by rank)
 * @param options minEffect band, alpha and adjustment (adjusted intervals), title, standalone namespace, plot width
 * @returns SVG markup; a short "no claims" figure when `claims` is empty
 * @example renderForestPlot(result.claims, { minEffect: result.settings.min_effect, alpha: result.settings.alpha, adjust: result.settings.adjust })
 */
export function renderForestPlot(claims: readonly TestedClaim[], options: ForestPlotOptions = {}): string {
  const ns = options.standalone ? ` xmlns="http://www.w3.org/2000/svg"` : "";
  const title = options.title ?? "Forest plot of the tested claims";
  const open = (w: number, h: number) =>
    `<svg${ns} class="forest-plot" viewBox="0 0 ${w} ${h}" width="${w}" height="${h}" role="img" aria-label="${escapeXml(title)}" font-family="${escapeXml(FONT_STACK)}" font-size="${FS}" fill="${INK.text}"><title>${escapeXml(title)}</title>`;
  if (claims.length === 0) {
    const empty = "No claims were tested, so there is nothing to plot.";
    return open(Math.ceil(8 + widthOf(empty, FS) + RIGHT_MARGIN), 40) + `<text x="8" y="24" fill="${INK.muted}">${empty}</text></svg>`;
  }
  const rows = [...claims].sort((a, b) => a.rank - b.rank);
  const minEffect = options.minEffect !== undefined && Number.isFinite(options.minEffect) && options.minEffect > 0 ? options.minEffect : 0;
  const plotW = options.plotWidth ?? 340;
  const alpha = options.alpha !== undefined && options.alpha > 0 && options.alpha < 1 ? options.alpha : undefined;
  const adjusted = rows.map((c) => (alpha !== undefined ? adjustedInterval(c, alpha) : undefined));

  // domain: zero, every finite CI bound and effect, and the band, clamped to [-1, 1]
  let lo = 0;
  let hi = 0;
  for (const c of rows) for (const v of [c.effect, c.ci[0], c.ci[1]]) if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  for (const a of adjusted) if (a) for (const v of a.ci) if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  lo = Math.max(-1, Math.min(lo, -minEffect));
  hi = Math.min(1, Math.max(hi, minEffect));
  if (hi - lo < 0.1) { lo -= 0.05; hi += 0.05; }
  const step = tickStep(hi - lo);
  lo = Math.max(-1, Math.floor(lo / step - 1e-9) * step);
  hi = Math.min(1, Math.ceil(hi / step + 1e-9) * step);

  const bold = rows.map((c) => c.verdict === "contradicted");
  const labels = rows.map((c) => claimLabel(c));
  const shown = labels.map((l, i) => fit(l, MAX_LABEL, bold[i]!));
  const rankW = widthOf(String(rows.length), FS) + 14;
  const labelW = Math.min(MAX_LABEL, Math.max(120, widthOf("claim", FS, true), ...shown.map((l, i) => widthOf(l, FS, bold[i]!)))) + 16;
  const texts = rows.map((c) => typographicMinus(`${claimEffectSymbol(c)} = ${formatEffectWithCI(c.effect, c.ci)}`));
  const adjTexts = rows.map((c, i) => {
    const a = adjusted[i];
    if (alpha === undefined) return "";
    if (!a) return "n/a";
    const d = Math.max(...[c.effect, ...c.ci].map((v) => (Number.isFinite(v) && Math.abs(v) < 0.1 ? 3 : 2)));
    return typographicMinus(formatCI(a.ci, d));
  });
  const levelText = formatLevel(1 - (alpha ?? 0.05));
  const estHead = `estimate [${levelText} CI]`;
  const adjHead = "adjusted interval";
  const textW = Math.max(widthOf(estHead, FS, true), ...texts.map((t, i) => widthOf(t, FS, bold[i]!))) + 16;
  const adjW = alpha === undefined ? 0 : Math.max(widthOf(adjHead, FS, true), ...adjTexts.map((t, i) => widthOf(t, FS, bold[i]!))) + 16;

  const left = 8 + rankW + labelW;
  const top = 30;
  const plotH = rows.length * ROW;
  const axisY = top + plotH;
  const estX = left + plotW + 16;
  const adjX = estX + textW;
  const X = (v: number) => left + ((v - lo) / (hi - lo)) * plotW;
  // the legend, laid out first so the drawing can be sized to it; items wrap to further lines
  // rather than widen the drawing beyond its columns
  const legendTop = axisY + 60;
  const legendItems: Array<{ shape: (x: number, y: number) => string; text: string }> = [
    { shape: (x, y) => `<path d="M${n(x + 6)},${n(y - 6)} L${n(x + 12)},${n(y)} L${n(x + 6)},${n(y + 6)} L${n(x)},${n(y)} z" fill="${PALETTE.vermillion}"/>`, text: "contradicted" },
    { shape: (x, y) => `<circle cx="${n(x + 6)}" cy="${n(y)}" r="4.6" fill="#ffffff" stroke="${PALETTE.blue}" stroke-width="2"/>`, text: "consistent" },
    { shape: (x, y) => `<line x1="${n(x - 2)}" x2="${n(x + 14)}" y1="${n(y)}" y2="${n(y)}" stroke="${INK.arrow}" stroke-width="3"/>`, text: `${levelText} confidence interval (unadjusted)` },
  ];
  if (rows.some((c) => c.detectable !== undefined)) {
    legendItems.push({
      shape: (x, y) => `<line x1="${n(x + 6)}" x2="${n(x + 6)}" y1="${n(y - 6)}" y2="${n(y + 6)}" stroke="${INK.muted}" stroke-width="1.2" stroke-dasharray="2 1.5"/>`,
      text: "smallest effect the claim's test detects with the chosen power (± for signed effects)",
    });
  }
  if (rows.some(isSeveralDf)) {
    legendItems.push({
      shape: () => "",
      text: `effects on several df (never negative): the lower limit inverts the test at level α = ${alpha ?? 0.05}, one-sided, so it is above 0 exactly when p < α`,
    });
  }
  if (alpha !== undefined) {
    const adj = options.adjust ?? "holm";
    const how = adj === "holm" ? "Holm" : "Benjamini–Hochberg";
    legendItems.push({
      shape: (x, y) =>
        `<line x1="${n(x - 2)}" x2="${n(x + 14)}" y1="${n(y)}" y2="${n(y)}" stroke="${INK.arrow}" stroke-width="1"/><line x1="${n(x - 2)}" x2="${n(x - 2)}" y1="${n(y - 3)}" y2="${n(y + 3)}" stroke="${INK.arrow}"/><line x1="${n(x + 14)}" x2="${n(x + 14)}" y1="${n(y - 3)}" y2="${n(y + 3)}" stroke="${INK.arrow}"/>`,
      text: adj === "none" ? `interval at the verdicts' level α = ${alpha}` : `interval at the ${how}-adjusted level of each claim, as its verdict`,
    });
  }
  if (minEffect > 0) {
    legendItems.push({
      shape: (x, y) => `<rect x="${n(x - 2)}" y="${n(y - 7)}" width="16" height="14" fill="${PALETTE.sky}" fill-opacity="0.25"/>`,
      text: typographicMinus(`|effect| below the relevance threshold ${minEffect}`),
    });
  }
  const axisLabel = "effect (partial correlation scale; 0 = independent)";
  const contentRight = Math.max(adjX + adjW, estX + textW, left + plotW / 2 + widthOf(axisLabel, 12) / 2, left + plotW / 2 + widthOf(`effect and ${levelText} CI`, FS, true) / 2);
  const legendLeft = 8 + rankW;
  let lx = legendLeft;
  let ly = legendTop;
  let legendRight = 0;
  let legend = "";
  for (const item of legendItems) {
    const w = 18 + widthOf(item.text, 12);
    if (lx > legendLeft && lx + w > contentRight) {
      lx = legendLeft;
      ly += 22;
    }
    legend += item.shape(lx, ly) + `<text x="${n(lx + 18)}" y="${n(ly)}" dy="0.35em" font-size="12" fill="${INK.muted}">${escapeXml(item.text)}</text>`;
    legendRight = Math.max(legendRight, lx + w);
    lx += w + 24;
  }
  const width = Math.ceil(Math.max(contentRight, legendRight) + RIGHT_MARGIN);
  const height = ly + 16;

  let out = "";
  // header
  out += `<text x="8" y="18" font-weight="600" fill="${INK.muted}">#</text>`;
  out += `<text x="${n(8 + rankW)}" y="18" font-weight="600" fill="${INK.muted}">claim</text>`;
  out += `<text x="${n(left + plotW / 2)}" y="18" text-anchor="middle" font-weight="600" fill="${INK.muted}">effect and ${levelText} CI</text>`;
  out += `<text x="${n(estX)}" y="18" font-weight="600" fill="${INK.muted}">${estHead}</text>`;
  if (alpha !== undefined) out += `<text x="${n(adjX)}" y="18" font-weight="600" fill="${INK.muted}">${adjHead}</text>`;
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
  const clampX = (v: number) => X(Math.max(lo, Math.min(hi, v)));
  rows.forEach((c, i) => {
    const y = top + i * ROW + ROW / 2;
    const contradicted = c.verdict === "contradicted";
    const color = contradicted ? PALETTE.vermillion : PALETTE.blue;
    let mark = "";
    const adj = adjusted[i];
    if (adj && adj.ci.every(Number.isFinite)) {
      const a = clampX(adj.ci[0]);
      const b = clampX(adj.ci[1]);
      mark += `<line class="ci-adjusted" x1="${n(a)}" x2="${n(b)}" y1="${n(y)}" y2="${n(y)}" stroke="${color}" stroke-width="1"/>`;
      mark += `<line x1="${n(a)}" x2="${n(a)}" y1="${n(y - 3)}" y2="${n(y + 3)}" stroke="${color}" stroke-width="1"/><line x1="${n(b)}" x2="${n(b)}" y1="${n(y - 3)}" y2="${n(y + 3)}" stroke="${color}" stroke-width="1"/>`;
    }
    if (c.detectable !== undefined && Number.isFinite(c.detectable)) {
      // ± the smallest effect the claim's test detects with the settings' power (one tick for effects that are never negative)
      const ticks = isSeveralDf(c) ? [c.detectable] : [-c.detectable, c.detectable];
      for (const d of ticks) {
        const x = clampX(d);
        mark += `<line class="detectable" x1="${n(x)}" x2="${n(x)}" y1="${n(y - 6)}" y2="${n(y + 6)}" stroke="${INK.muted}" stroke-width="1.2" stroke-dasharray="2 1.5"/>`;
      }
    }
    const [l, u] = c.ci;
    if (Number.isFinite(l) && Number.isFinite(u)) {
      const a = clampX(l);
      const b = clampX(u);
      mark += `<line class="ci" x1="${n(a)}" x2="${n(b)}" y1="${n(y)}" y2="${n(y)}" stroke="${color}" stroke-width="3"/>`;
    }
    if (Number.isFinite(c.effect)) {
      const x = clampX(c.effect);
      mark += contradicted
        ? `<path class="point contradicted" d="M${n(x)},${n(y - 7)} L${n(x + 7)},${n(y)} L${n(x)},${n(y + 7)} L${n(x - 7)},${n(y)} z" fill="${color}" stroke="#ffffff" stroke-width="1"/>`
        : `<circle class="point consistent" cx="${n(x)}" cy="${n(y)}" r="4.6" fill="#ffffff" stroke="${color}" stroke-width="2"/>`;
    }
    const weight = contradicted ? ` font-weight="600"` : "";
    const ink = contradicted ? "#8a3a00" : INK.text;
    out +=
      `<g class="forest-row ${c.verdict}" data-rank="${c.rank}"><title>${escapeXml(`#${c.rank} ${labels[i]}: ${c.verdict}${c.p_undecided ? " (undecided: not resolved by the cap on Monte-Carlo draws)" : ""}`)}</title>` +
      `<text x="8" y="${n(y)}" dy="0.35em" fill="${INK.muted}">${c.rank}</text>` +
      `<text x="${n(8 + rankW)}" y="${n(y)}" dy="0.35em"${weight}>${independenceSvg(shown[i]!)}</text>` +
      mark +
      `<text class="estimate" x="${n(estX)}" y="${n(y)}" dy="0.35em" fill="${ink}"${weight}>${escapeXml(texts[i])}</text>` +
      (alpha !== undefined ? `<text class="adjusted" x="${n(adjX)}" y="${n(y)}" dy="0.35em" fill="${ink}"${weight}>${escapeXml(adjTexts[i])}</text>` : "") +
      `</g>`;
  });
  // axis
  out += `<line x1="${n(left)}" x2="${n(left + plotW)}" y1="${axisY}" y2="${axisY}" stroke="${INK.arrow}"/>`;
  for (const t of ticks) {
    out += `<line x1="${n(X(t))}" x2="${n(X(t))}" y1="${axisY}" y2="${axisY + 5}" stroke="${INK.arrow}"/><text class="tick" x="${n(X(t))}" y="${axisY + 18}" text-anchor="middle" font-size="11.5" fill="${INK.muted}">${escapeXml(tickLabel(t, step))}</text>`;
  }
  out += `<text x="${n(left + plotW / 2)}" y="${axisY + 36}" text-anchor="middle" font-size="12" fill="${INK.muted}">${axisLabel}</text>`;
  out += `<g class="legend">${legend}</g>`;
  return open(width, height) + out + `</svg>`;
}
