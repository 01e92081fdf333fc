import { Worker } from "node:worker_threads";

/**
 * Start a worker thread running the module `name` (without extension) beside the module whose
 * `import.meta.url` is `here`: the compiled `.js` file, or, when running from TypeScript sources
 * (tsx, tests), the `.ts` file after registering the TypeScript loader in the worker.
 * Cost: one thread start (tens of milliseconds).
 * @throws the worker constructor's errors (e.g. no threads available)
 * @example startWorker(import.meta.url, "readRangeWorker", { kind: "readRange", task })
 */
export function startWorker(here: string, name: string, workerData: unknown): Worker {
  if (!here.endsWith(".ts")) return new Worker(new URL(`./${name}.js`, here), { workerData });
  const api = import.meta.resolve("tsx/esm/api");
  const entry = new URL(`./${name}.ts`, here).href;
  const boot = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(entry)}); })`;
  return new Worker(boot, { eval: true, workerData });
}
