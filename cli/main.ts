#!/usr/bin/env node
import { processIo } from "./io.js";
import { run } from "./program.js";

const code = await run(process.argv.slice(2), processIo());
process.exitCode = code;
