/**
 * The shapes of an audit: a claim to test, the outcome of one test method on it,
 * and the whole result (`AuditResult`) that `--json` prints as it is and every renderer formats.
 * JSON field names are a public contract: add fields, never rename.
 */
import type { VariableType } from "../data/Table.js";
import type { SummarySource } from "../data/summaryData.js";
import type { GraphSummary } from "../graph/graphSummary.js";
import type { MonteCarloSummary } from "../stats/monteCarloDecision.js";

/** An implied independence x ⫫ y | given, derived from a missing arrow. */
export interface Claim {
  x: string;
  y: string;
  given: string[];
}

/** A missing arrow no set of measured nodes can test, with the reason. */
export interface UntestableClaim {
  x: string;
  y: string;
  /** Present when a separating set exists but the data cannot test it (constant column, collinear set...). */
  given?: string[];
  reason: string;
}

export type TestName = "gcm" | "gcm-rank" | "pearson-partial" | "stratified-chisq" | "linear-by-linear" | "regression-lr";

/** What one test method returns for one claim. */
export interface TestOutcome {
  test: TestName;
  /** Rows used (complete cases of the claim's variables, after --listwise if set). */
  n: number;
  /** The test statistic: t for partial correlations, G² / LR for likelihood-ratio tests. */
  statistic: number;
  df: number;
  /** Unadjusted p-value, never exactly 0 (see `log_p`). */
  p: number;
  /** Natural log of p, exact even where p underflows. */
  log_p: number;
  /** Effect on the common scale: partial correlation, or sign·√(1 − exp(−LR/n)). */
  effect: number;
  /** 95% confidence interval of `effect`. */
  ci: [number, number];
  p_method: "asymptotic" | "permutation";
  /** Monte-Carlo permutations used, when p_method is permutation. */
  B?: number;
  /** Monte-Carlo precision of p, when p_method is permutation (draws, hits, cap, standard error, 99% interval; the audit adds the decision). */
  monte_carlo?: MonteCarloReport;
  /** Test-specific numbers (X², Mantel–Haenszel odds ratio, strata counts, model details...). */
  details?: Record<string, unknown>;
  /** Problems that did not stop the test (non-convergence at the limit, sparse strata...). */
  warnings?: string[];
}

/**
 * The Monte-Carlo precision of a permutation p-value and how its verdict was decided
 * (`stats/monteCarloDecision.ts`). The test method fills the first five fields, the audit the rest.
 */
export interface MonteCarloReport extends MonteCarloSummary {
  /** The p below which the claim is contradicted, the other claims' p-values as reported (α, or its Holm or Benjamini–Hochberg step). */
  threshold?: number;
  /** Resampling risk ε: the chance that any Monte-Carlo verdict differs from the exact permutation verdict is at most ε (per claim with --adjust none). */
  risk?: number;
  /** The confidence-sequence interval for p the decision used (Clopper–Pearson at ε/(m·J)). */
  decision_interval?: [number, number];
}

export type Verdict = "contradicted" | "consistent";

export interface TestedClaim extends Claim, TestOutcome {
  p_adjusted: number;
  verdict: Verdict;
  /** 1-based rank (contradicted first, then adjusted p ascending, ties by |effect| descending). */
  rank: number;
  /** Repairs in graph-file notation that keep the graph acyclic: "x -> y", "y -> x", "x <-> y". */
  arrows: string[];
  /**
   * Present (true) when the verdict was not resolved by the cap on Monte-Carlo draws: it depends on
   * Monte-Carlo p-values (this claim's or, under Holm or Benjamini–Hochberg, others') whose intervals
   * still straddle their thresholds. Read the verdict as provisional.
   */
  p_undecided?: true;
  /** With p_undecided on a Monte-Carlo claim: the --permutations that would likely decide it (from the current estimate), absent when over 10⁷. */
  p_proposed_B?: number;
  /**
   * The smallest |effect| this claim's test would detect with power `settings.power` at the level
   * it faced (α, or α/k under Holm or Benjamini–Hochberg; `audit/detectable.ts`); absent when the
   * test has too few df.
   */
  detectable?: number;
  /**
   * The equivalence test against `settings.margin` (`audit/equivalence.ts`): "supported" when the
   * effect's (1 − 2α) interval lies inside (−margin, margin), else "inconclusive".
   */
  equivalence?: "supported" | "inconclusive";
  /** The (1 − 2α) interval the equivalence test used (90% at α = 0.05). */
  equivalence_interval?: [number, number];
}

export interface VariableSummary {
  name: string;
  type: VariableType;
  type_source: "inferred" | "declared";
  missing: number;
  levels?: string[];
}

export interface AuditSettings {
  alpha: number;
  adjust: "holm" | "bh" | "none";
  method: "auto" | "linear" | "rank" | "chisq" | "regression";
  min_effect: number;
  listwise: boolean;
  sets: "union-parents" | "minimal" | "all-minimal";
  rank_by: "p" | "effect";
  seed: number;
  permutations?: number;
  /** Margin of the equivalence tests on the effect scale (--margin); absent: 0.1. */
  margin?: number;
  /** Power at which each claim's detectable effect is computed (--power); absent: 0.8. */
  power?: number;
  /** Resampling risk ε of Monte-Carlo verdicts (--resampling-risk); absent: 1e-3. */
  resampling_risk?: number;
}

export interface GlobalTest {
  method: "fisher-c";
  statistic: number;
  df: number;
  p: number;
  /** Number of claims combined (k). */
  k: number;
  contradicted: number;
  /** k · alpha: contradictions expected by chance alone if every claim held (before adjustment). */
  expected_by_chance: number;
  /** Set when the global test's assumptions are not met (e.g. a non-basis set was used). */
  note?: string;
  /** Claims per group: verdict crossed with equivalence (`audit/equivalence.ts`). */
  groups?: { contradicted: number; contradicted_within_margin: number; supported: number; inconclusive: number };
}

export interface AuditResult {
  tool: { name: "arrowaudit"; version: string };
  /**
   * The data read: the file, its rows, the rows used and missing-data patterns. For an audit from
   * summary statistics, `source` says which matrix (correlations or covariance) and its n
   * (`rows` is then n, with one complete-data pattern).
   */
  data: { file?: string; rows: number; rows_used: number; patterns: number; source?: SummarySource };
  variables: VariableSummary[];
  graph: GraphSummary;
  settings: AuditSettings;
  claims: TestedClaim[];
  untestable: UntestableClaim[];
  global: GlobalTest;
  warnings: string[];
}
