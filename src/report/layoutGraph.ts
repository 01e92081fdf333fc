/**
 * Layout of the causal graph for the report drawing.
 *
 * Terms: a *node box* is the rectangle (measured node) or ellipse (unmeasured node) drawn for a
 * node; a *drawn arrow* is a directed edge of the graph; a *bidirected edge* `a <-> b` stands for
 * an unmeasured common cause; a *contradiction* is a missing arrow x–y whose implied independence
 * the data contradicted, overlaid on the drawing as a connector labelled with its effect.
 *
 * Directed arrows are placed by the layered ("Sugiyama") method: nodes in layers so arrows run
 * left to right, crossings reduced by layer sweeps, spline routing (Sugiyama K., Tagawa S., Toda M.
 * 1981, "Methods for visual understanding of hierarchical system structures", IEEE Trans. SMC
 * 11(2):109–125), as implemented by the general-purpose Eclipse Layout Kernel (elkjs) with a fixed
 * random seed, so the same graph always gives the same layout. Bidirected edges and contradictions
 * do not take part in layering (they have no direction); each is drawn as a quadratic curve that
 * bows to whichever side crosses fewer node boxes.
 *
 * Large graphs: the layered layout's work grows faster than the number of nodes plus the dummy
 * positions of arrows that span several layers (see placeInLayers.ts); node placement by network
 * simplex and keeping the declaration order (considerModelOrder) dominate it. Measured with elkjs
 * 0.12 on 2 shared cores (load 3–4, so about twice the time on an idle machine): random DAGs of
 * 100 nodes and 300 arrows (880 nodes and dummies) 3.2–3.7 s; 300 nodes and 900 arrows (3,339)
 * 31 s, 15 s with Brandes–Köpf placement, 4.5 s without the declaration order as well; 200 nodes
 * (1,641) 2.9 s and 500 nodes (4,477) 9 s that way; chains deeper than a few thousand layers
 * overflow elkjs's stack. So {@link chooseLayout} keeps the full layout up to 500 nodes and
 * dummies, drops network simplex and the declaration order up to 3,000 (and 1,500 layers), and
 * above that places nodes itself ({@link placeInLayers}: longest-path layers, one barycentre
 * sweep, straight arrows; linear time: 1,000 nodes in under 2 s, 20,000 in 3 s), where connectors
 * no longer look for the side with fewer boxes.
 */
import ELKmod from "elkjs";
import type { ElkNode, ElkExtendedEdge } from "elkjs";
import type { AuditResult } from "../audit/types.js";
import { UnknownNodeError } from "../errors.js";
import { claimEffectSymbol, formatEffect, typographicMinus } from "./format.js";
import { longestPathLayers, placeInLayers } from "./placeInLayers.js";
import { estimateTextWidth } from "./textWidth.js";

const ELK = ELKmod.default;

export interface Point {
  x: number;
  y: number;
}

/** A placed node: top-left corner, size, and whether it is measured (box) or unmeasured (ellipse). */
export interface NodeBox {
  id: string;
  measured: boolean;
  x: number;
  y: number;
  width: number;
  height: number;
}

/** A routed directed arrow. `kind: "spline"` means `points` = start, then cubic Bézier triples. */
export interface ArrowRoute {
  from: string;
  to: string;
  kind: "spline" | "polyline";
  points: Point[];
}

/** A quadratic curve between two nodes, clipped to their outlines. */
export interface Connector {
  a: string;
  b: string;
  start: Point;
  control: Point;
  end: Point;
  /** The curve's midpoint, where a label goes. */
  mid: Point;
}

/** A contradicted missing arrow to overlay on the drawing. */
export interface ContradictionMark {
  x: string;
  y: string;
  effect: number;
  /** Short label, e.g. "r = 0.21". */
  label: string;
  rank: number;
}

export interface GraphMarks {
  /** Contradictions to overlay; derived from the result's contradicted claims when omitted. */
  contradictions?: ContradictionMark[];
  /** The layout method; chosen by {@link chooseLayout} when omitted. */
  method?: LayoutMethod;
}

/**
 * How a layout was made: "layered" (elkjs, network-simplex node placement, declaration order
 * kept where it costs no crossing: the best drawing), "layered-fast" (elkjs with Brandes–Köpf
 * node placement and free order within layers: faster, a little less compact), or
 * "layered-simple" (longest-path layers and one barycentre sweep, straight arrows: any size).
 */
export type LayoutMethod = "layered" | "layered-fast" | "layered-simple";

/** Where {@link chooseLayout} switches methods, in nodes plus dummy positions (and layers, for elkjs's stack). */
export const LAYOUT_THRESHOLDS = { layered: 500, layeredFast: 3_000, elkLayers: 1_500 } as const;

export interface GraphLayout {
  /** How the layout was made (see {@link LayoutMethod}). */
  method: LayoutMethod;
  width: number;
  height: number;
  nodes: NodeBox[];
  arrows: ArrowRoute[];
  bidirected: Connector[];
  contradictions: (Connector & ContradictionMark)[];
}

/** The graph part of an audit result. */
export type ReportGraph = AuditResult["graph"];

/** Font size of node labels, in px (the renderer uses the same). */
export const NODE_FONT_SIZE = 13;
const NODE_HEIGHT = 34;
const PAD = 28;

function isResult(input: AuditResult | ReportGraph): input is AuditResult {
  return (input as AuditResult).claims !== undefined && (input as AuditResult).graph !== undefined;
}

/**
 * Contradiction marks of a result: one per contradicted claim, in rank order, labelled with the
 * effect symbol and value ("r = 0.21"). Cost: O(k).
 *
 * @example contradictionMarks(result)[0].label // "r = 0.21"
 */
export function contradictionMarks(result: Pick<AuditResult, "claims">): ContradictionMark[] {
  return result.claims
    .filter((c) => c.verdict === "contradicted")
    .sort((a, b) => a.rank - b.rank)
    .map((c) => ({ x: c.x, y: c.y, effect: c.effect, rank: c.rank, label: typographicMinus(`${claimEffectSymbol(c)} = ${formatEffect(c.effect)}`) }));
}

/** Size of a node box from its label: boxes get side padding, ellipses need about 30% more width. */
function nodeSize(id: string, measured: boolean): { width: number; height: number } {
  const text = estimateTextWidth(id, NODE_FONT_SIZE);
  if (measured) return { width: Math.ceil(Math.max(52, text + 30)), height: NODE_HEIGHT };
  return { width: Math.ceil(Math.max(64, text * 1.18 + 36)), height: NODE_HEIGHT + 4 };
}

function center(n: NodeBox): Point {
  return { x: n.x + n.width / 2, y: n.y + n.height / 2 };
}

/** Point where the ray from the node's centre towards `toward` leaves its outline. */
function clipToOutline(n: NodeBox, toward: Point, gap: number): Point {
  const c = center(n);
  const dx = toward.x - c.x;
  const dy = toward.y - c.y;
  const len = Math.hypot(dx, dy);
  if (len === 0) return c;
  const ux = dx / len;
  const uy = dy / len;
  let t: number;
  if (n.measured) {
    const hx = n.width / 2;
    const hy = n.height / 2;
    t = Math.min(ux === 0 ? Infinity : hx / Math.abs(ux), uy === 0 ? Infinity : hy / Math.abs(uy));
  } else {
    const a = n.width / 2;
    const b = n.height / 2;
    t = 1 / Math.sqrt((ux * ux) / (a * a) + (uy * uy) / (b * b));
  }
  return { x: c.x + ux * (t + gap), y: c.y + uy * (t + gap) };
}

function quad(p0: Point, c: Point, p1: Point, t: number): Point {
  const u = 1 - t;
  return { x: u * u * p0.x + 2 * u * t * c.x + t * t * p1.x, y: u * u * p0.y + 2 * u * t * c.y + t * t * p1.y };
}

function inside(p: Point, n: NodeBox, margin: number): boolean {
  return p.x > n.x - margin && p.x < n.x + n.width + margin && p.y > n.y - margin && p.y < n.y + n.height + margin;
}

/**
 * Route a curved connector between two placed nodes: try both sides and three bow depths, keep the
 * one whose sampled curve passes through the fewest other boxes (ties: shallower, then the side
 * with positive orientation), then clip the ends to the node outlines. Cost: O(N) per connector.
 */
function routeConnector(a: NodeBox, b: NodeBox, others: NodeBox[], used: Point[]): Connector {
  const ca = center(a);
  const cb = center(b);
  const dx = cb.x - ca.x;
  const dy = cb.y - ca.y;
  const dist = Math.max(1, Math.hypot(dx, dy));
  const nx = -dy / dist;
  const ny = dx / dist;
  let best: { score: number; control: Point } | undefined;
  for (const depth of [0.18, 0.32, 0.5]) {
    for (const side of [1, -1]) {
      const bow = Math.max(26, depth * dist) * side;
      const control = { x: (ca.x + cb.x) / 2 + nx * bow, y: (ca.y + cb.y) / 2 + ny * bow };
      let score = depth * 0.5;
      for (let i = 1; i < 24; i++) {
        const p = quad(ca, control, cb, i / 24);
        for (const o of others) if (inside(p, o, 6)) score += 1;
      }
      // keep labels of different connectors apart
      const mid = quad(ca, control, cb, 0.5);
      for (const u of used) if (Math.hypot(u.x - mid.x, u.y - mid.y) < 40) score += 3;
      if (best === undefined || score < best.score) best = { score, control };
    }
  }
  const control = best!.control;
  const start = clipToOutline(a, control, 1);
  const end = clipToOutline(b, control, 1);
  const mid = quad(start, control, end, 0.5);
  used.push(mid);
  return { a: a.id, b: b.id, start, control, end, mid };
}

/** The layout method for a graph and the figures it was chosen by. */
export interface LayoutChoice {
  method: LayoutMethod;
  nodes: number;
  arrows: number;
  /** Layers of the longest-path layering, and the dummy positions of arrows spanning several. */
  layers: number;
  dummies: number;
}

/**
 * Choose the layout method by the size of the work (see the module comment for the figures):
 * "layered" up to LAYOUT_THRESHOLDS.layered nodes plus dummy positions, "layered-fast" up to
 * LAYOUT_THRESHOLDS.layeredFast (and at most LAYOUT_THRESHOLDS.elkLayers layers), else
 * "layered-simple". Cost: O(V + E).
 * @example chooseLayout({ nodes: ["a", "b"], measured: ["a", "b"], unmeasured: [], arrows: [["a", "b"]], bidirected: [] }).method // "layered"
 */
export function chooseLayout(graph: ReportGraph): LayoutChoice {
  const index = new Map(graph.nodes.map((n, i) => [n, i]));
  const arrows = graph.arrows.filter(([a, b]) => index.has(a) && index.has(b)).map(([a, b]) => [index.get(a)!, index.get(b)!] as const);
  const { layers, dummies } = longestPathLayers(graph.nodes.length, arrows);
  const work = graph.nodes.length + dummies;
  const method: LayoutMethod =
    work <= LAYOUT_THRESHOLDS.layered && layers <= LAYOUT_THRESHOLDS.elkLayers
      ? "layered"
      : work <= LAYOUT_THRESHOLDS.layeredFast && layers <= LAYOUT_THRESHOLDS.elkLayers
        ? "layered-fast"
        : "layered-simple";
  return { method, nodes: graph.nodes.length, arrows: graph.arrows.length, layers, dummies };
}

/**
 * Lay out the causal graph for drawing: node boxes sized from their labels, directed arrows
 * routed by the layered method (left to right), bidirected edges and contradicted missing arrows
 * as curved connectors. Deterministic: the same input gives the same coordinates.
 * Cost: dominated by the layered layout, about O((N + E)²) in the worst case; tens of
 * milliseconds for 30 nodes; O(N log N + E + C·N) for the simple layout of large graphs (C
 * connectors), see {@link chooseLayout}.
 * Source: Sugiyama, Tagawa & Toda 1981 (IEEE Trans. SMC 11:109–125), via elkjs.
 *
 * @param input an audit result (contradictions taken from its contradicted claims) or just its graph
 * @param marks contradictions to overlay; overrides those derived from a result; `method` forces a layout method
 * @returns positions and routes in pixels, origin top-left, and the method used
 * @throws UnknownNodeError when an arrow, bidirected edge or contradiction names a node not in the graph
 * @example const layout = await layoutGraph(result); layout.nodes.length === result.graph.nodes.length
 */
export async function layoutGraph(input: AuditResult | ReportGraph, marks: GraphMarks = {}): Promise<GraphLayout> {
  const graph = isResult(input) ? input.graph : input;
  const contradictions = marks.contradictions ?? (isResult(input) ? contradictionMarks(input) : []);
  const unmeasured = new Set(graph.unmeasured);
  const known = new Set(graph.nodes);
  const unknown = [
    ...graph.arrows.flat(),
    ...graph.bidirected.flat(),
    ...contradictions.flatMap((c) => [c.x, c.y]),
  ].filter((n) => !known.has(n));
  if (unknown.length > 0) {
    const names = [...new Set(unknown)];
    throw new UnknownNodeError(`cannot draw the graph: ${names.map((n) => JSON.stringify(n)).join(", ")} not among its nodes; pass the graph the result was computed from`, names);
  }

  const method = marks.method ?? chooseLayout(graph).method;
  const sizes = graph.nodes.map((n) => nodeSize(n, !unmeasured.has(n)));
  const placed = method === "layered-simple" ? placeSimply(graph, sizes) : await placeWithElk(graph, sizes, method);
  const byId = new Map((placed.children ?? []).map((c) => [c.id, c]));
  const nodes: NodeBox[] = graph.nodes.map((n, i) => {
    const c = byId.get(`n${i}`)!;
    return { id: n, measured: !unmeasured.has(n), x: c.x ?? 0, y: c.y ?? 0, width: c.width ?? 0, height: c.height ?? 0 };
  });
  const boxOf = new Map(nodes.map((n) => [n.id, n]));

  const edgesById = new Map((placed.edges ?? []).map((e) => [e.id, e as ElkExtendedEdge]));
  const arrows: ArrowRoute[] = graph.arrows.map(([a, b], i) => {
    const section = edgesById.get(`e${i}`)?.sections?.[0];
    if (section === undefined) {
      const s = clipToOutline(boxOf.get(a)!, center(boxOf.get(b)!), 0);
      const t = clipToOutline(boxOf.get(b)!, center(boxOf.get(a)!), 0);
      return { from: a, to: b, kind: "polyline", points: [s, t] };
    }
    const bends = section.bendPoints ?? [];
    const points = [section.startPoint, ...bends, section.endPoint].map((p) => ({ x: p.x, y: p.y }));
    return { from: a, to: b, kind: bends.length > 0 && (bends.length + 1) % 3 === 0 ? "spline" : "polyline", points };
  });

  const used: Point[] = [];
  const simple = method === "layered-simple";
  const connect = (x: string, y: string): Connector => {
    const a = boxOf.get(x)!;
    const b = boxOf.get(y)!;
    // In the simple layout of a large graph, looking for the side with fewer boxes would cost O(N) per connector.
    return routeConnector(a, b, simple ? [] : nodes.filter((n) => n !== a && n !== b), simple ? [] : used);
  };
  const bidirected = graph.bidirected.map(([x, y]) => connect(x, y));
  const contra = contradictions.map((m) => ({ ...connect(m.x, m.y), ...m }));
  return fitCanvas(method, placed, nodes, arrows, bidirected, contra);
}

/** Node positions (and arrow routes) from elkjs's layered algorithm; ids are `n<index>` and `e<index>`. */
async function placeWithElk(graph: ReportGraph, sizes: { width: number; height: number }[], method: LayoutMethod): Promise<ElkNode> {
  // ELK needs unique ids; node names are unique but may contain any character, so use indices
  const ids = new Map(graph.nodes.map((n, i) => [n, `n${i}`]));
  const root: ElkNode = {
    id: "root",
    layoutOptions: {
      "elk.algorithm": "layered",
      "elk.direction": "RIGHT",
      "elk.edgeRouting": "SPLINES",
      "elk.randomSeed": "1",
      "elk.spacing.nodeNode": "30",
      "elk.layered.spacing.nodeNodeBetweenLayers": "64",
      "elk.spacing.edgeNode": "16",
      "elk.layered.nodePlacement.strategy": method === "layered" ? "NETWORK_SIMPLEX" : "BRANDES_KOEPF",
      "elk.layered.considerModelOrder.strategy": method === "layered" ? "NODES_AND_EDGES" : "NONE",
      "elk.spacing.componentComponent": "40",
      "elk.padding": `[top=${PAD},left=${PAD},bottom=${PAD},right=${PAD}]`,
    },
    children: graph.nodes.map((n, i) => ({ id: ids.get(n)!, ...sizes[i]! })),
    edges: graph.arrows.map(([a, b], i): ElkExtendedEdge => ({ id: `e${i}`, sources: [ids.get(a)!], targets: [ids.get(b)!] })),
  };
  return new ELK().layout(root);
}

/** Node positions from {@link placeInLayers}, in the shape elkjs returns (no arrow routes: arrows are straight). */
function placeSimply(graph: ReportGraph, sizes: { width: number; height: number }[]): ElkNode {
  const index = new Map(graph.nodes.map((n, i) => [n, i]));
  const p = placeInLayers(
    graph.arrows.map(([a, b]) => [index.get(a)!, index.get(b)!] as const),
    sizes,
    { pad: PAD, betweenLayers: 64, betweenNodes: 30 },
  );
  return {
    id: "root",
    width: p.width,
    height: p.height,
    children: sizes.map((s, i) => ({ id: `n${i}`, x: p.x[i]!, y: p.y[i]!, ...s })),
    edges: [],
  };
}

/** Shift everything so that the bowed connectors and their labels fit the canvas too. */
function fitCanvas(
  method: LayoutMethod,
  placed: ElkNode,
  nodes: NodeBox[],
  arrows: ArrowRoute[],
  bidirected: Connector[],
  contra: (Connector & ContradictionMark)[],
): GraphLayout {
  // the canvas must hold the bowed connectors and their labels as well as the ELK drawing
  let maxX = placed.width ?? 0;
  let maxY = placed.height ?? 0;
  let minX = 0;
  let minY = 0;
  for (const c of [...bidirected, ...contra]) {
    for (let i = 0; i <= 12; i++) {
      const p = quad(c.start, c.control, c.end, i / 12);
      minX = Math.min(minX, p.x - 8);
      minY = Math.min(minY, p.y - 8);
      maxX = Math.max(maxX, p.x + 8);
      maxY = Math.max(maxY, p.y + 8);
    }
  }
  for (const c of contra) {
    const half = (estimateTextWidth(c.label, 12) * 1.08 + 20) / 2 + 2;
    minX = Math.min(minX, c.mid.x - half);
    maxX = Math.max(maxX, c.mid.x + half);
    minY = Math.min(minY, c.mid.y - 14);
    maxY = Math.max(maxY, c.mid.y + 14);
  }
  const shift = (p: Point): Point => ({ x: p.x - minX, y: p.y - minY });
  const shiftC = <T extends Connector>(c: T): T => ({ ...c, start: shift(c.start), control: shift(c.control), end: shift(c.end), mid: shift(c.mid) });
  return {
    method,
    width: Math.ceil(maxX - minX),
    height: Math.ceil(maxY - minY),
    nodes: nodes.map((n) => ({ ...n, x: n.x - minX, y: n.y - minY })),
    arrows: arrows.map((a) => ({ ...a, points: a.points.map(shift) })),
    bidirected: bidirected.map(shiftC),
    contradictions: contra.map(shiftC),
  };
}
