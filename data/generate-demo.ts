/**
 * Generates the invented demo cohort in data/demo/ (cohort.csv and graph.txt).
 *
 * The scenario is invented for demonstration only: the "Lakeside Ageing Cohort" does not
 * exist and no value here was measured on anyone. The structural model below includes a
 * direct effect that the demo graph leaves out (weekly activity lowers CRP directly, not
 * only through BMI), so the audit shows a real contradiction, and an unmeasured frailty
 * variable that the graph declares.
 *
 * Run with `npm run demo:data`; the output is byte-identical for the same SEED.
 */
import { writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { mulberry32 } from "../src/stats/mulberry32.js";

const SEED = 20261202;
const N = 3000;

const rand = mulberry32(SEED);
/** Standard normal by Box–Muller. */
function normal(): number {
  const u = 1 - rand();
  const v = rand();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}
const bernoulli = (p: number): boolean => rand() < p;
const logistic = (x: number): number => 1 / (1 + Math.exp(-x));
const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

const header = ["id", "age", "sex", "education", "region", "smoker", "activity_days", "bmi", "sbp", "crp", "grip", "fall_2y"];
const lines = [header.join(",")];
const regions = ["north", "south", "east", "west"];
const eduLevels = ["primary", "secondary", "tertiary"];

for (let i = 0; i < N; i++) {
  // Exogenous variables
  const age = clamp(65 + 25 * Math.pow(rand(), 1.3), 65, 90);
  const female = bernoulli(0.55);
  const eduLatent = normal();
  const edu = eduLatent < -0.5 ? 0 : eduLatent < 0.7 ? 1 : 2;
  const region = Math.floor(rand() * 4);
  const frailty = normal(); // unmeasured

  // Structural equations (the demo graph omits activity -> crp)
  const smoker = bernoulli(logistic(-0.9 - 0.5 * (edu - 1) + (female ? -0.4 : 0.2)));
  const regionShift = [0.3, -0.2, 0, -0.1][region]!;
  const actLatent = 3.2 - 0.06 * (age - 75) + 0.5 * (edu - 1) + regionShift - 0.7 * frailty + 1.2 * normal();
  const activity = Math.round(clamp(actLatent, 0, 7));
  const bmi = 27.5 - 0.45 * (activity - 3) + 3.5 * normal();
  const sbp = 128 + 0.6 * (age - 75) + 0.9 * (bmi - 27) + (smoker ? 3 : 0) + 14 * normal();
  const logCrp = 0.4 + 0.06 * (bmi - 27) + (smoker ? 0.35 : 0) - 0.12 * (activity - 3) + 0.75 * normal();
  const crp = Math.exp(logCrp);
  const grip = (female ? 24 : 36) - 0.35 * (age - 75) - 2.2 * frailty + 4.5 * normal();
  const fall = bernoulli(logistic(-1.6 + 0.045 * (age - 75) - 0.05 * (grip - 30) + 0.55 * frailty + 0.25 * logCrp));

  // Measured values, with missing values coded as cohort files often code them
  const bmiOut = rand() < 0.03 ? "-9" : bmi.toFixed(1);
  const sbpOut = rand() < 0.02 ? "999" : Math.round(sbp).toString();
  const crpOut = rand() < 0.05 ? "" : crp.toFixed(2);
  const gripOut = rand() < 0.04 ? "NA" : grip.toFixed(1);
  lines.push(
    [
      `LAC${String(i + 1).padStart(5, "0")}`,
      age.toFixed(1),
      female ? "female" : "male",
      eduLevels[edu]!,
      regions[region]!,
      smoker ? "yes" : "no",
      String(activity),
      bmiOut,
      sbpOut,
      crpOut,
      gripOut,
      fall ? "1" : "0",
    ].join(","),
  );
}

const graph = `# Demo graph for the invented Lakeside Ageing Cohort (not a real study).
# The analyst's assumptions about older adults' health, drawn before looking at the data.
unmeasured: frailty

age -> sbp, grip, activity_days, fall_2y
sex -> grip, smoker
education -> smoker, activity_days
region -> activity_days
smoker -> crp, sbp
activity_days -> bmi
bmi -> sbp, crp
frailty -> grip, activity_days, fall_2y
grip -> fall_2y
crp -> fall_2y
`;

// An output folder may be given (the tests regenerate into a temporary folder and compare bytes).
const dir = process.argv[2] ?? join(dirname(fileURLToPath(import.meta.url)), "demo");
writeFileSync(join(dir, "cohort.csv"), lines.join("\n") + "\n");
writeFileSync(join(dir, "graph.txt"), graph);
console.log(`wrote ${N} rows to ${join(dir, "cohort.csv")} and the graph to ${join(dir, "graph.txt")}`);
