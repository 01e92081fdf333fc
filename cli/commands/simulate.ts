import { UsageError } from "../../src/errors.js";
import { parseTypeDeclarations } from "../../src/data/readOptions.js";
import { simulateFromGraph, simulationCsv } from "../../src/data/simulateFromGraph.js";
import { checkInputFile, refuseOverwritingInputs } from "../checkPaths.js";
import { EXIT } from "../exitCodes.js";
import type { Io } from "../io.js";
import { loadGraph } from "../loadGraph.js";
import { checkOneStdin, inputName } from "../readStdin.js";
import { writeOutputs } from "../writeOutputs.js";

/** Where the model JSON goes beside a data file: `data.csv` → `data.model.json`. */
export function modelPathFor(dataPath: string): string {
  return dataPath.replace(/\.(csv|txt|tsv)$/iu, "") + ".model.json";
}

/**
 * `arrowaudit simulate <graph> --n N [--seed S] [--effects 0.3|random] [--types …]
 * [--missing-rate r] [--out data.csv]`: invented data from the graph's structural model
 * (src/data/simulateFromGraph.ts). With --out the model's coefficients go to `<out>.model.json`
 * beside the data (or to --model); without it the CSV goes to stdout and the model only to --model.
 */
export async function runSimulate(io: Io, graphPath: string, opts: Record<string, unknown>): Promise<number> {
  checkOneStdin({ graph: graphPath });
  checkInputFile(io, { path: graphPath, role: "graph file" });
  const out = typeof opts.out === "string" ? opts.out : undefined;
  const modelPath = typeof opts.model === "string" ? opts.model : out !== undefined ? modelPathFor(out) : undefined;
  if (out !== undefined && modelPath !== undefined && out === modelPath) throw new UsageError(`--model ${modelPath} is the data file too; give the model a name of its own`);
  const outputs = [...(out !== undefined ? [{ path: out, role: `--out ${out}` }] : []), ...(modelPath !== undefined ? [{ path: modelPath, role: `model file ${modelPath}` }] : [])];
  if (outputs.length) refuseOverwritingInputs(io, outputs, [{ path: graphPath, role: "graph file" }]);
  const graph = await loadGraph(io, graphPath, opts);
  const types = typeof opts.types === "string" ? parseTypeDeclarations(opts.types) : {};
  const unknown = Object.keys(types).filter((name) => !graph.hasNode(name));
  if (unknown.length) throw new UsageError(`--types names ${unknown.map((n) => `"${n}"`).join(", ")}, not ${unknown.length > 1 ? "nodes" : "a node"} of ${inputName(graphPath)}; check the spelling`);
  const effects = opts.effects === "random" ? "random" : Number(opts.effects);
  const data = simulateFromGraph(graph, { n: opts.n as number, seed: opts.seed as number, effects, types, missingRate: opts.missingRate as number });
  const csv = simulationCsv(data);
  const model = JSON.stringify({ generator: "arrowaudit simulate", graph: inputName(graphPath), data: out ?? "standard output", ...data.model }, null, 2) + "\n";
  const files = [...(out !== undefined ? [{ path: out, content: csv }] : []), ...(modelPath !== undefined ? [{ path: modelPath, content: model }] : [])];
  if (files.length) writeOutputs(io, files);
  if (out === undefined) io.stdout(csv);
  if (!opts.quiet) {
    const measured = data.columns.length;
    io.stderr(`simulated ${data.model.n} rows of ${measured} measured variable${measured === 1 ? "" : "s"} (invented data, seed ${data.model.seed})${out !== undefined ? ` into ${out}` : ""}${modelPath !== undefined ? `; model in ${modelPath}` : ""}\n`);
  }
  return EXIT.ok;
}
