/**
 * SVG drawing of a laid-out causal graph, with the data's contradictions overlaid.
 *
 * Visual grammar (meaning never carried by colour alone):
 * - measured node: rectangle, solid blue outline, tinted fill, upright label;
 * - unmeasured node: ellipse, dashed grey outline, pale fill, italic label;
 * - drawn arrow: solid dark line with a filled arrowhead;
 * - bidirected edge (unmeasured common cause): curved, short-dashed purple line, heads at both ends;
 * - contradiction (a missing arrow the data contradict): curved, long-dashed vermillion line without
 *   heads, thicker, labelled with its effect in a pill.
 *
 * Structure, relied on by tests and by anyone post-processing the file: each node is one
 * `<g class="node" data-node="…">`, each drawn arrow one `<path class="arrow">`, each bidirected
 * edge one `<path class="bidirected">`, each contradiction one `<g class="contradiction">`.
 */
import { escapeXml } from "./escapeXml.js";
import type { ArrowRoute, Connector, GraphLayout, NodeBox, Point } from "./layoutGraph.js";
import { NODE_FONT_SIZE } from "./layoutGraph.js";
import { estimateTextWidth } from "./textWidth.js";
import { FONT_STACK, INK, PALETTE } from "./theme.js";

export interface GraphSvgOptions {
  /** Accessible title of the drawing (read by screen readers, shown as a tooltip). */
  title?: string;
  /** Draw the legend below the graph (default true). */
  legend?: boolean;
  /** Prefix for element ids (markers), so several drawings can share one HTML page. Default "aa-g". */
  idPrefix?: string;
  /** Add the SVG namespace declaration, needed for a standalone .svg file (default false: inline in HTML). */
  standalone?: boolean;
}

/** Said under a drawing made by the simple layout of large graphs (see `chooseLayout`). */
const LAYOUT_NOTE = "Large graph: nodes placed in layers by their longest path from a source, without crossing reduction; arrows are straight and may pass over nodes.";

/** Round to 0.1 px so output is short and stable across platforms. */
function n(v: number): string {
  const r = Math.round(v * 10) / 10;
  return Object.is(r, -0) ? "0" : String(r);
}

function pt(p: Point): string {
  return `${n(p.x)},${n(p.y)}`;
}

function arrowPath(a: ArrowRoute): string {
  const [first, ...rest] = a.points;
  if (first === undefined) return "";
  if (a.kind === "spline") {
    let d = `M${pt(first)}`;
    for (let i = 0; i + 2 < rest.length; i += 3) d += ` C${pt(rest[i]!)} ${pt(rest[i + 1]!)} ${pt(rest[i + 2]!)}`;
    return d;
  }
  return `M${pt(first)}` + rest.map((p) => ` L${pt(p)}`).join("");
}

function connectorPath(c: Connector): string {
  return `M${pt(c.start)} Q${pt(c.control)} ${pt(c.end)}`;
}

function nodeSvg(b: NodeBox): string {
  const cx = b.x + b.width / 2;
  const cy = b.y + b.height / 2;
  const shape = b.measured
    ? `<rect x="${n(b.x)}" y="${n(b.y)}" width="${n(b.width)}" height="${n(b.height)}" rx="5" fill="${INK.measuredFill}" stroke="${PALETTE.blue}" stroke-width="1.6"/>`
    : `<ellipse cx="${n(cx)}" cy="${n(cy)}" rx="${n(b.width / 2)}" ry="${n(b.height / 2)}" fill="${INK.unmeasuredFill}" stroke="${INK.unmeasuredStroke}" stroke-width="1.4" stroke-dasharray="4 3"/>`;
  const style = b.measured ? "" : ` font-style="italic" fill="${INK.muted}"`;
  return (
    `<g class="node ${b.measured ? "measured" : "unmeasured"}" data-node="${escapeXml(b.id)}">` +
    `<title>${escapeXml(b.id)} (${b.measured ? "measured" : "unmeasured"})</title>` +
    shape +
    `<text x="${n(cx)}" y="${n(cy)}" dy="0.35em" text-anchor="middle"${style}>${escapeXml(b.id)}</text></g>`
  );
}

function markers(id: string): string {
  const head = (name: string, color: string, w: number) =>
    `<marker id="${id}-${name}" viewBox="0 0 10 10" refX="9.5" refY="5" markerWidth="${w}" markerHeight="${w}" markerUnits="userSpaceOnUse" orient="auto-start-reverse">` +
    `<path d="M0.5,0.8 L9.5,5 L0.5,9.2 L2.6,5 z" fill="${color}"/></marker>`;
  return `<defs>${head("arrow", INK.arrow, 11)}${head("bi", PALETTE.purple, 10)}</defs>`;
}

interface LegendResult {
  svg: string;
  width: number;
  height: number;
}

/** Legend in rows of items that wrap to `maxWidth`. */
function legend(id: string, maxWidth: number, top: number): LegendResult {
  const items: { w: number; draw: (x: number, y: number) => string; text: string }[] = [
    {
      w: 34,
      text: "measured variable",
      draw: (x, y) => `<rect x="${n(x)}" y="${n(y - 9)}" width="30" height="18" rx="4" fill="${INK.measuredFill}" stroke="${PALETTE.blue}" stroke-width="1.6"/>`,
    },
    {
      w: 34,
      text: "unmeasured variable",
      draw: (x, y) => `<ellipse cx="${n(x + 15)}" cy="${n(y)}" rx="15" ry="9" fill="${INK.unmeasuredFill}" stroke="${INK.unmeasuredStroke}" stroke-width="1.4" stroke-dasharray="4 3"/>`,
    },
    {
      w: 40,
      text: "arrow in the graph",
      draw: (x, y) => `<path d="M${n(x)},${n(y)} L${n(x + 36)},${n(y)}" stroke="${INK.arrow}" stroke-width="1.5" fill="none" marker-end="url(#${id}-arrow)"/>`,
    },
    {
      w: 40,
      text: "unmeasured common cause (<->)",
      draw: (x, y) =>
        `<path d="M${n(x + 1)},${n(y + 3)} Q${n(x + 18)},${n(y - 8)} ${n(x + 35)},${n(y + 3)}" stroke="${PALETTE.purple}" stroke-width="1.8" stroke-dasharray="3 3" fill="none" marker-start="url(#${id}-bi)" marker-end="url(#${id}-bi)"/>`,
    },
    {
      w: 40,
      text: "missing arrow contradicted by the data (effect shown)",
      draw: (x, y) => `<path d="M${n(x)},${n(y)} L${n(x + 36)},${n(y)}" stroke="${PALETTE.vermillion}" stroke-width="2.4" stroke-dasharray="7 4" fill="none"/>`,
    },
  ];
  const fs = 12;
  const rowH = 26;
  let x = 0;
  let y = top + rowH / 2;
  let width = 0;
  let out = "";
  for (const it of items) {
    const itemW = it.w + 8 + estimateTextWidth(it.text, fs) + 22;
    if (x > 0 && x + itemW > maxWidth) {
      x = 0;
      y += rowH;
    }
    out += it.draw(x + 14, y) + `<text x="${n(x + 14 + it.w + 8)}" y="${n(y)}" dy="0.35em" font-size="${fs}" fill="${INK.muted}">${escapeXml(it.text)}</text>`;
    x += itemW;
    width = Math.max(width, x);
  }
  return { svg: `<g class="legend">${out}</g>`, width: width + 14, height: y + rowH / 2 - top + 6 };
}

/**
 * Render a graph layout as an SVG document fragment (`<svg>…</svg>`): nodes, drawn arrows with
 * arrowheads, bidirected edges as curved double-headed dashed connectors, contradicted missing
 * arrows as labelled dashed connectors, and a legend. All names are XML-escaped.
 * Cost: O(N + E + legend).
 *
 * @param layout the output of `layoutGraph`
 * @param options title, legend, id prefix, standalone namespace
 * @returns SVG markup; with `standalone: true` a well-formed XML document element
 * @example renderGraphSvg(await layoutGraph(result), { title: "Causal graph" }).startsWith("<svg")
 */
export function renderGraphSvg(layout: GraphLayout, options: GraphSvgOptions = {}): string {
  const id = (options.idPrefix ?? "aa-g").replace(/[^A-Za-z0-9_-]/g, "_");
  const title = options.title ?? "Causal graph";
  const withLegend = options.legend ?? true;
  const lg = withLegend ? legend(id, Math.max(layout.width, 560), layout.height + 4) : undefined;
  const noteText = layout.method === "layered-simple" ? LAYOUT_NOTE : undefined;
  const noteTop = layout.height + (lg ? lg.height + 8 : 0);
  const width = Math.ceil(Math.max(layout.width, lg?.width ?? 0, noteText ? estimateTextWidth(noteText, 12) + 28 : 0));
  const height = Math.ceil(noteTop + (noteText ? 24 : 0));
  const ns = options.standalone ? ` xmlns="http://www.w3.org/2000/svg"` : "";

  const arrows = layout.arrows
    .map(
      (a) =>
        `<path class="arrow" data-from="${escapeXml(a.from)}" data-to="${escapeXml(a.to)}" d="${arrowPath(a)}" fill="none" stroke="${INK.arrow}" stroke-width="1.5" marker-end="url(#${id}-arrow)"><title>${escapeXml(`${a.from} → ${a.to}`)}</title></path>`,
    )
    .join("");
  const bidirected = layout.bidirected
    .map(
      (c) =>
        `<path class="bidirected" data-a="${escapeXml(c.a)}" data-b="${escapeXml(c.b)}" d="${connectorPath(c)}" fill="none" stroke="${PALETTE.purple}" stroke-width="1.8" stroke-dasharray="3 3" marker-start="url(#${id}-bi)" marker-end="url(#${id}-bi)"><title>${escapeXml(`${c.a} ↔ ${c.b}: unmeasured common cause`)}</title></path>`,
    )
    .join("");
  const nodes = layout.nodes.map(nodeSvg).join("");
  const contradictions = layout.contradictions
    .map((c) => {
      const lw = estimateTextWidth(c.label, 12) * 1.08 + 20;
      return (
        `<g class="contradiction" data-x="${escapeXml(c.x)}" data-y="${escapeXml(c.y)}" data-rank="${c.rank}">` +
        `<title>${escapeXml(`#${c.rank}: missing arrow ${c.x} – ${c.y} contradicted by the data, ${c.label}`)}</title>` +
        `<path d="${connectorPath(c)}" fill="none" stroke="#ffffff" stroke-width="5" stroke-opacity="0.85"/>` +
        `<path d="${connectorPath(c)}" fill="none" stroke="${PALETTE.vermillion}" stroke-width="2.4" stroke-dasharray="7 4" stroke-linecap="round"/>` +
        `<rect x="${n(c.mid.x - lw / 2)}" y="${n(c.mid.y - 10)}" width="${n(lw)}" height="20" rx="10" fill="${INK.contradictionLabelFill}" stroke="${PALETTE.vermillion}" stroke-width="1.2"/>` +
        `<text x="${n(c.mid.x)}" y="${n(c.mid.y)}" dy="0.35em" text-anchor="middle" font-size="12" font-weight="600" fill="#8a3a00">${escapeXml(c.label)}</text></g>`
      );
    })
    .join("");

  return (
    `<svg${ns} class="graph-drawing" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-labelledby="${id}-title" font-family="${escapeXml(FONT_STACK)}" font-size="${NODE_FONT_SIZE}" fill="${INK.text}">` +
    `<title id="${id}-title">${escapeXml(title)}</title>` +
    markers(id) +
    `<g class="arrows">${arrows}</g><g class="bidirected-edges">${bidirected}</g><g class="nodes">${nodes}</g><g class="contradictions">${contradictions}</g>` +
    (lg ? `<line x1="0" x2="${width}" y1="${n(layout.height + 2)}" y2="${n(layout.height + 2)}" stroke="${INK.rule}"/>` + lg.svg : "") +
    (noteText ? `<text class="layout-note" x="14" y="${n(noteTop + 12)}" dy="0.35em" font-size="12" fill="${INK.muted}">${escapeXml(noteText)}</text>` : "") +
    `</svg>`
  );
}
