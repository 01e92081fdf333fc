/**
 * Build step after tsc (`npm run build`): inline @stdlib's special functions into the compiled
 * dist/src/stats/special.js, so that loading them reads one file instead of resolving and
 * compiling about a hundred small packages (see src/stats/special.ts for the measured cost).
 * The code is @stdlib's own, unchanged (Apache-2.0; its notices are kept in the output).
 */
import { buildSync } from "esbuild";
import { fileURLToPath } from "node:url";

const file = fileURLToPath(new URL("../dist/src/stats/special.js", import.meta.url));
buildSync({
  entryPoints: [file],
  outfile: file,
  allowOverwrite: true,
  bundle: true,
  format: "esm",
  platform: "node",
  target: "node20",
  legalComments: "eof",
  logLevel: "warning",
});
