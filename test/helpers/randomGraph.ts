/**
 * Seeded random causal graphs for tests and benchmarks.
 * `randomGraphSpec(seed, options)` always gives the same graph for the same arguments
 * (mulberry32 generator), so a failing case can be replayed from its seed.
 */
import fc from "fast-check";
import type { Graph } from "../../src/graph/Graph.js";
import { createGraph, type GraphSpec } from "../../src/graph/createGraph.js";
import { mulberry32 } from "../../src/stats/mulberry32.js";

export { mulberry32 };

export interface RandomGraphOptions {
  /** Number of nodes (≥ 1). */
  nodes: number;
  /** Number of distinct arrows (capped at nodes·(nodes−1)/2). */
  arrows: number;
  /** Number of nodes marked unmeasured (default 0). */
  unmeasured?: number;
  /** Number of bidirected edges between distinct nodes (default 0). */
  bidirected?: number;
  /** Mix in Unicode names (Greek, CJK, accented, emoji) — default false. */
  unicode?: boolean;
}

const UNICODE = ["β", "γ₂", "血压", "café", "Δt", "🫀", "naïve", "ЖК"];

/** Random DAG: a hidden random causal order, arrows between random earlier→later pairs. */
export function randomGraphSpec(seed: number, options: RandomGraphOptions): GraphSpec {
  const rand = mulberry32(seed);
  const int = (k: number) => Math.floor(rand() * k);
  const n = Math.max(1, Math.floor(options.nodes));
  // Names carry no hint of the causal order: declare nodes in a shuffled order.
  const names = Array.from({ length: n }, (_, i) => (options.unicode && i < UNICODE.length * 3 && i % 3 === 0 ? `${UNICODE[(i / 3) % UNICODE.length]}${i}` : `v${i}`));
  const rank = shuffle(Array.from({ length: n }, (_, i) => i), int); // rank[k] = node at causal position k
  const maxArrows = (n * (n - 1)) / 2;
  const target = Math.min(Math.max(0, Math.floor(options.arrows)), maxArrows);
  const keys = new Set<number>();
  const arrows: Array<[string, string]> = [];
  if (target > maxArrows / 2) {
    // Dense: shuffle all pairs and take a prefix.
    const all: Array<[number, number]> = [];
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) all.push([i, j]);
    shuffle(all, int);
    for (const [i, j] of all.slice(0, target)) arrows.push([names[rank[i]!]!, names[rank[j]!]!]);
  } else {
    while (arrows.length < target) {
      let i = int(n);
      let j = int(n);
      if (i === j) continue;
      if (i > j) [i, j] = [j, i];
      const key = i * n + j;
      if (keys.has(key)) continue;
      keys.add(key);
      arrows.push([names[rank[i]!]!, names[rank[j]!]!]);
    }
  }
  const bidirected: Array<[string, string]> = [];
  const biKeys = new Set<number>();
  const wantBi = Math.min(options.bidirected ?? 0, maxArrows);
  while (bidirected.length < wantBi) {
    let i = int(n);
    let j = int(n);
    if (i === j) continue;
    if (i > j) [i, j] = [j, i];
    if (biKeys.has(i * n + j)) continue;
    biKeys.add(i * n + j);
    bidirected.push([names[i]!, names[j]!]);
  }
  const unmeasured = shuffle(names.slice(), int).slice(0, Math.min(n, options.unmeasured ?? 0));
  return { nodes: shuffle(names.slice(), int), arrows, bidirected, unmeasured };
}

/** `createGraph(randomGraphSpec(seed, options))`. */
export function randomGraph(seed: number, options: RandomGraphOptions): Graph {
  return createGraph(randomGraphSpec(seed, options));
}

function shuffle<T>(xs: T[], int: (k: number) => number): T[] {
  for (let i = xs.length - 1; i > 0; i--) {
    const j = int(i + 1);
    [xs[i], xs[j]] = [xs[j]!, xs[i]!];
  }
  return xs;
}

/**
 * fast-check arbitrary of small random graphs with some unmeasured nodes and `<->` edges;
 * shrinks towards fewer nodes, arrows and latent structure.
 */
export function graphArbitrary(maxNodes = 9): fc.Arbitrary<{ seed: number; options: RandomGraphOptions; graph: Graph }> {
  return fc
    .record({
      seed: fc.integer({ min: 0, max: 2 ** 31 - 1 }),
      nodes: fc.integer({ min: 1, max: maxNodes }),
      densityPercent: fc.integer({ min: 0, max: 70 }),
      unmeasured: fc.integer({ min: 0, max: 4 }),
      bidirected: fc.integer({ min: 0, max: 3 }),
      unicode: fc.boolean(),
    })
    .map(({ seed, nodes, densityPercent, unmeasured, bidirected, unicode }) => {
      const options: RandomGraphOptions = {
        nodes,
        arrows: Math.round((densityPercent * nodes * (nodes - 1)) / 200),
        unmeasured: Math.min(unmeasured, Math.max(0, nodes - 2)),
        bidirected: nodes > 1 ? bidirected : 0,
        unicode,
      };
      return { seed, options, graph: randomGraph(seed, options) };
    });
}
