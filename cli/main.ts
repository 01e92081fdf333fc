#!/usr/bin/env node
import { processIo } from "./io.js";
import { run } from "./program.js";
import { settleSignals } from "./signals.js";

const code = await run(process.argv.slice(2), processIo());
await settleSignals(); // a SIGINT/SIGTERM caught while writing output exits 130/143 here
process.exitCode = code;
