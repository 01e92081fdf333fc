/**
 * Test setup: property tests (fast-check) run with a fixed seed so that CI is repeatable;
 * FC_SEED=<n> picks another seed and FC_SEED=random explores afresh (run it before a release).
 */
import fc from "fast-check";

const seed = process.env.FC_SEED;
if (seed !== "random") fc.configureGlobal({ seed: seed ? Number(seed) : 20261202 });
