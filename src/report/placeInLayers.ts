/**
 * A fast layered placement, for graphs too large for the full layered layout of layoutGraph.ts.
 *
 * Terms: the *layer* of a node is the number of arrows on the longest directed path that ends at
 * it (longest-path layering: sources are in layer 0 and every arrow points to a later layer); an
 * arrow that spans more than one layer passes *dummy* positions in the layers between, which a
 * full layered layout routes around (their number measures that layout's work); the *barycentre*
 * of a node is the mean relative position of its parents in their layers.
 *
 * Method: longest-path layering, then one left-to-right sweep that orders each layer by the
 * barycentre of the nodes' parents (ties: order of declaration), as in the first phase of
 * Sugiyama, Tagawa & Toda (1981), "Methods for visual understanding of hierarchical system
 * structures", IEEE Trans. SMC 11(2):109–125, without their further crossing reduction. Arrows
 * are straight lines, so one that spans several layers may pass over nodes.
 */

/** Layers of a directed acyclic graph given by node count and arrows between node indices. */
export interface Layering {
  /** Layer of each node (0 for sources). */
  layer: Int32Array;
  /** Number of layers (0 for an empty graph). */
  layers: number;
  /** Σ over arrows of (layers spanned − 1): the dummy positions a full layered layout must route. */
  dummies: number;
}

/**
 * Longest-path layering of a DAG (Kahn's topological order, then each node one layer after its
 * latest parent). Cost: O(V + E).
 * @throws Error when the arrows contain a directed cycle (graphs are validated before drawing)
 * @example longestPathLayers(3, [[0, 1], [1, 2], [0, 2]]) // layer [0, 1, 2], layers 3, dummies 1
 */
export function longestPathLayers(n: number, arrows: ReadonlyArray<readonly [number, number]>): Layering {
  const indeg = new Int32Array(n);
  const start = new Int32Array(n + 1);
  for (const [a, b] of arrows) {
    indeg[b]!++;
    start[a + 1]!++;
  }
  for (let i = 0; i < n; i++) start[i + 1]! += start[i]!;
  const fill = start.slice(0, n);
  const child = new Int32Array(arrows.length);
  for (const [a, b] of arrows) child[fill[a]!++] = b;
  const layer = new Int32Array(n);
  const queue = new Int32Array(n);
  let qn = 0;
  for (let v = 0; v < n; v++) if (indeg[v] === 0) queue[qn++] = v;
  for (let qi = 0; qi < qn; qi++) {
    const v = queue[qi]!;
    for (let k = start[v]!; k < start[v + 1]!; k++) {
      const c = child[k]!;
      if (layer[v]! + 1 > layer[c]!) layer[c] = layer[v]! + 1;
      if (--indeg[c]! === 0) queue[qn++] = c;
    }
  }
  if (qn < n) throw new Error("longestPathLayers: the arrows contain a directed cycle");
  let layers = 0;
  for (let v = 0; v < n; v++) layers = Math.max(layers, layer[v]! + 1);
  let dummies = 0;
  for (const [a, b] of arrows) dummies += layer[b]! - layer[a]! - 1;
  return { layer, layers, dummies };
}

export interface LayerSpacing {
  /** Space around the drawing. */
  pad: number;
  /** Horizontal gap between layers. */
  betweenLayers: number;
  /** Vertical gap between nodes of a layer. */
  betweenNodes: number;
}

/** Top-left corners of the nodes, and the size of the whole drawing (padding included). */
export interface LayerPlacement {
  x: Float64Array;
  y: Float64Array;
  width: number;
  height: number;
}

/**
 * Place the nodes of a DAG left to right in longest-path layers, each layer a column ordered by
 * one barycentre sweep and centred vertically; each node centred in its column's width.
 * Deterministic. Cost: O(V log V + E).
 * @param sizes width and height of each node's box
 * @example placeInLayers([[0, 1]], [{ width: 60, height: 34 }, { width: 60, height: 34 }], { pad: 28, betweenLayers: 64, betweenNodes: 30 }).x[1] // 152
 */
export function placeInLayers(
  arrows: ReadonlyArray<readonly [number, number]>,
  sizes: ReadonlyArray<{ width: number; height: number }>,
  spacing: LayerSpacing,
): LayerPlacement {
  const n = sizes.length;
  const { layer, layers } = longestPathLayers(n, arrows);
  const members: number[][] = Array.from({ length: layers }, () => []);
  for (let v = 0; v < n; v++) members[layer[v]!]!.push(v);
  const parentStart = new Int32Array(n + 1);
  for (const [, b] of arrows) parentStart[b + 1]!++;
  for (let i = 0; i < n; i++) parentStart[i + 1]! += parentStart[i]!;
  const fill = parentStart.slice(0, n);
  const parent = new Int32Array(arrows.length);
  for (const [a, b] of arrows) parent[fill[b]!++] = a;

  // Relative position (0..1) of each placed node within its layer.
  const rel = new Float64Array(n);
  for (const list of members) {
    if (list !== members[0]) {
      const key = new Map<number, number>();
      for (const v of list) {
        let sum = 0;
        for (let k = parentStart[v]!; k < parentStart[v + 1]!; k++) sum += rel[parent[k]!]!;
        key.set(v, sum / (parentStart[v + 1]! - parentStart[v]!));
      }
      list.sort((a, b) => key.get(a)! - key.get(b)! || a - b);
    }
    list.forEach((v, i) => (rel[v] = (i + 0.5) / list.length));
  }

  // Loops, not Math.max(...list): a layer or a chain can hold more values than a call takes arguments.
  const columnWidth = members.map((list) => list.reduce((w, v) => Math.max(w, sizes[v]!.width), 0));
  const columnHeight = members.map((list) => list.reduce((h, v) => h + sizes[v]!.height, 0) + Math.max(0, list.length - 1) * spacing.betweenNodes);
  const tallest = columnHeight.reduce((a, b) => Math.max(a, b), 0);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  let left = spacing.pad;
  members.forEach((list, l) => {
    let top = spacing.pad + (tallest - columnHeight[l]!) / 2;
    for (const v of list) {
      x[v] = left + (columnWidth[l]! - sizes[v]!.width) / 2;
      y[v] = top;
      top += sizes[v]!.height + spacing.betweenNodes;
    }
    left += columnWidth[l]! + spacing.betweenLayers;
  });
  const width = layers === 0 ? 2 * spacing.pad : left - spacing.betweenLayers + spacing.pad;
  return { x, y, width, height: tallest + 2 * spacing.pad };
}
