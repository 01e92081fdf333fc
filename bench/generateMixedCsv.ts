/**
 * Writes a seeded benchmark cohort of mixed variable types and the graph that generated it:
 * `rows` rows over a random 50-node DAG whose first `categorical` nodes (in a shuffled order)
 * are categorical (binary, 3-level ordinal or 4-level nominal, as text or integer codes) and the
 * rest continuous. Values come from a latent linear model thresholded into levels. Invented data.
 */
import { createWriteStream } from "node:fs";
import { writeFileSync } from "node:fs";
import { mulberry32 } from "../src/stats/mulberry32.js";

export interface BenchCohortSpec {
  rows: number;
  nodes: number;
  categorical: number;
  /** Expected parents per node. */
  density: number;
  /** Fraction of values missing in the 10 columns chosen to have missing values. */
  missing: number;
  seed: number;
}

export async function generateMixedCohort(csvPath: string, graphPath: string, spec: BenchCohortSpec): Promise<void> {
  const rand = mulberry32(spec.seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
  const p = spec.nodes;
  const names = Array.from({ length: p }, (_, i) => `v${String(i + 1).padStart(2, "0")}`);
  // Random DAG on the order 0..p-1
  const parents: number[][] = names.map(() => []);
  const coef: number[][] = names.map(() => []);
  for (let j = 1; j < p; j++) {
    for (let i = 0; i < j; i++) {
      if (rand() < spec.density / Math.max(1, j)) {
        parents[j]!.push(i);
        coef[j]!.push((rand() < 0.5 ? -1 : 1) * (0.2 + 0.4 * rand()));
      }
    }
  }
  // Which nodes are categorical, and of which kind
  const idx = names.map((_, i) => i).sort(() => rand() - 0.5);
  const kind: Array<"cont" | "bin" | "ord" | "nom"> = names.map(() => "cont");
  idx.slice(0, spec.categorical).forEach((i, k) => (kind[i] = (["bin", "ord", "nom"] as const)[k % 3]!));
  const firstMissing = Math.max(0, spec.categorical - 5);
  const missingCols = new Set(idx.slice(firstMissing, firstMissing + 10));
  const nomLevels = ["alpha", "beta", "gamma", "delta"];

  const out = createWriteStream(csvPath, { highWaterMark: 1 << 22 });
  const write = (s: string) => new Promise<void>((res) => (out.write(s) ? res() : out.once("drain", () => res())));
  await write(names.join(",") + "\n");
  const latent = new Float64Array(p);
  const score = new Float64Array(p);
  let buf: string[] = [];
  for (let r = 0; r < spec.rows; r++) {
    const cells: string[] = new Array(p);
    for (let j = 0; j < p; j++) {
      let s = 0;
      const pa = parents[j]!;
      for (let k = 0; k < pa.length; k++) s += coef[j]![k]! * score[pa[k]!]!;
      const l = s + normal();
      latent[j] = l;
      let cell: string;
      switch (kind[j]) {
        case "bin": {
          const v = l > 0 ? 1 : 0;
          score[j] = 2 * v - 1;
          cell = String(v);
          break;
        }
        case "ord": {
          const v = l < -0.6 ? 0 : l < 0.6 ? 1 : 2;
          score[j] = v - 1;
          cell = String(v + 1);
          break;
        }
        case "nom": {
          const v = l < -0.7 ? 0 : l < 0 ? 1 : l < 0.7 ? 2 : 3;
          score[j] = [-1, 0.5, -0.5, 1][v]!;
          cell = nomLevels[v]!;
          break;
        }
        default:
          score[j] = l;
          cell = l.toFixed(4);
      }
      cells[j] = missingCols.has(j) && rand() < spec.missing ? "" : cell;
    }
    buf.push(cells.join(","));
    if (buf.length === 10000) {
      await write(buf.join("\n") + "\n");
      buf = [];
    }
  }
  if (buf.length) await write(buf.join("\n") + "\n");
  await new Promise<void>((res) => out.end(res));

  const lines = ["# benchmark graph (generated, invented data)"];
  for (let j = 0; j < p; j++) {
    if (parents[j]!.length) lines.push(`${parents[j]!.map((i) => names[i]).join(", ")} -> ${names[j]}`);
    else lines.push(names[j]!);
  }
  const types = names.map((n, j) => (kind[j] === "nom" ? `${n}=nominal` : kind[j] === "ord" ? `${n}=ordinal` : kind[j] === "bin" ? `${n}=binary` : `${n}=continuous`));
  writeFileSync(graphPath, lines.join("\n") + "\n");
  writeFileSync(graphPath + ".types", types.join(",") + "\n");
}
