/**
 * The generalised covariance measure: a test of conditional independence from the products of
 * two regression residuals.
 *
 * Terms. For a claim x ⫫ y | S, let e_x and e_y be the residuals of x and of y after their
 * regressions on S (vectors when a side is nominal: one residual per indicator of its levels but
 * the first). The *residual product* of row i is R_i = e_x,i ⊗ e_y,i (q components). Under the
 * claim, and when both regressions estimate the conditional means E[x | S] and E[y | S] well
 * enough, √n · mean(R) is asymptotically normal with mean 0 and covariance Var(R), *whatever the
 * conditional variances* of x and y (Shah & Peters 2020, "The hardness of conditional
 * independence testing and the generalised covariance measure", Annals of Statistics
 * 48:1514–1538, Theorem 8). The statistic is
 *   W = n · mean(R)ᵀ Σ̂⁻¹ mean(R),   Σ̂ = (1/m) Σ_i (R_i − mean(R))(R_i − mean(R))ᵀ,
 * its one-component form the normalised mean T = √n · mean(R)/σ̂.
 * *Small-sample scaling.* With p adjustment columns fitted by least squares, the residuals of
 * homoscedastic data have Σ e² ≈ (n − 1 − p)σ² while Var(Σ R) ≈ (n − 1 − p)σ_x²σ_y², so W is
 * scaled by (n − 1 − p)/n, which makes it exactly the squared partial-correlation statistic's
 * scale in that case; the one-component statistic is then referred to Student's t on
 * ν = n − 2 − p degrees of freedom (the partial correlation t test's), and the q-component one,
 * as a Hotelling-type statistic, to F(q, ν − q + 1) after multiplying by (ν − q + 1)/(qν)
 * (Hotelling 1931, Annals of Mathematical Statistics 2:360–378; Anderson 2003, An Introduction to
 * Multivariate Statistical Analysis, 3rd ed., §5.2). Both reduce to the large-sample normal and
 * chi-square references as n grows.
 */
import { cholesky } from "./linalg.js";
import { fisherFUpper, logFisherFUpper, logStudentTTwoSided, studentTTwoSided } from "./pvalues.js";
import { normalQuantile, studentTCritical } from "./quantiles.js";

export interface GcmStatisticInput {
  /** Complete cases (rows behind the sum of the residual products). */
  n: number;
  /** Adjustment columns in the regressions (intercept excluded). */
  params: number;
  /** Σ_i R_i over the n rows (q components). */
  sumR: ArrayLike<number>;
  /** Covariance of the residual products, (1/m) Σ (R_i − mean)(R_i − mean)ᵀ (q × q row-major). */
  sigma: ArrayLike<number>;
}

export interface GcmStatisticResult {
  /** One component: the signed t statistic; several: the scaled Wald statistic W·(n − 1 − p)/n. */
  statistic: number;
  /** One component: ν = n − 2 − p (Student's t); several: the number of components used. */
  df: number;
  /** Components used (those whose residual products vary independently of the others). */
  components: number;
  /** The F statistic and its second df, for several components. */
  f?: number;
  df2?: number;
  p: number;
  log_p: number;
}

/** Relative pivot below which a component of the residual products is dropped as redundant. */
const COMPONENT_TOLERANCE = 1e-10;

/**
 * The generalised covariance measure test from the sum of the residual products and their
 * covariance (see the module comment). Returns `{ reason }` when no degrees of freedom are left
 * or the residual products do not vary.
 * Cost: O(q³).
 * Source: Shah & Peters (2020), Annals of Statistics 48:1514–1538.
 * @example gcmStatistic({ n: 100, params: 2, sumR: [5], sigma: [1] }).p // two-sided t p-value of 0.5·√97/√1 on 96 df
 */
export function gcmStatistic(input: GcmStatisticInput): GcmStatisticResult | { reason: string } {
  const { n, params: p } = input;
  const q = input.sumR.length;
  const nu = n - 2 - p;
  if (!(nu >= 1)) return { reason: `only ${n} complete cases for ${p} adjustment columns; the test needs at least ${p + 3}` };
  // Keep the components whose residual products vary (pivoted Cholesky of Σ̂ in order).
  const keep: number[] = [];
  let maxDiag = 0;
  for (let a = 0; a < q; a++) maxDiag = Math.max(maxDiag, input.sigma[a * q + a]!);
  if (!(maxDiag > 0) || !Number.isFinite(maxDiag)) return { reason: "the products of the two residuals do not vary; the claim cannot be tested" };
  for (let a = 0; a < q; a++) {
    const trial = [...keep, a];
    const k = trial.length;
    const sub = new Float64Array(k * k);
    for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) sub[i * k + j] = input.sigma[trial[i]! * q + trial[j]!]!;
    if (input.sigma[a * q + a]! > COMPONENT_TOLERANCE * maxDiag && cholesky(sub, k, COMPONENT_TOLERANCE)) keep.push(a);
  }
  const k = keep.length;
  const S = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) S[i * k + j] = input.sigma[keep[i]! * q + keep[j]!]!;
  const L = cholesky(S, k, COMPONENT_TOLERANCE)!;
  // W = n · mean(R)ᵀ Σ̂⁻¹ mean(R) = ‖L⁻¹ sumR‖² / n
  const zvec = new Float64Array(k);
  let w = 0;
  for (let i = 0; i < k; i++) {
    let s = input.sumR[keep[i]!]!;
    for (let j = 0; j < i; j++) s -= L[i * k + j]! * zvec[j]!;
    zvec[i] = s / L[i * k + i]!;
    w += zvec[i]! * zvec[i]!;
  }
  const wAdj = (w / n) * ((n - 1 - p) / n);
  if (k === 1) {
    const t = Math.sign(input.sumR[keep[0]!]!) * Math.sqrt(wAdj);
    const pv = studentTTwoSided(t, nu);
    return { statistic: t, df: nu, components: 1, p: pv > 0 ? pv : Number.MIN_VALUE, log_p: logStudentTTwoSided(t, nu) };
  }
  const df2 = nu - k + 1;
  if (!(df2 >= 1)) return { reason: `only ${n} complete cases for ${p} adjustment columns and ${k} residual products; collect more data or use a smaller set` };
  const f = (wAdj * df2) / (k * nu);
  const pv = fisherFUpper(f, k, df2);
  return { statistic: wAdj, df: k, components: k, f, df2, p: pv > 0 ? pv : Number.MIN_VALUE, log_p: logFisherFUpper(f, k, df2) };
}

/**
 * 95% (or `level`) interval of a residual correlation r tested by the one-component statistic t
 * on ν df: Fisher's z interval tanh(atanh r ± t_{ν,(1+level)/2} · |atanh r / t|), whose standard
 * error is the one the test implies, so the interval excludes 0 exactly when the two-sided p is
 * below 1 − level. When r or t is 0 the standard error 1/√(n − p − 3) of Fisher (1921, Metron
 * 1:3–32) is used. The critical value t_{ν,(1+level)/2} inverts the p-value's own tail function.
 * Cost: about 60 incomplete-beta evaluations.
 * @example gcmCorrelationInterval(0.2, 2.5, 200, 250, 3) // excludes 0, since |t| > 1.97
 */
export function gcmCorrelationInterval(r: number, t: number, nu: number, n: number, params: number, level = 0.95): [number, number] {
  const rr = Math.max(-1 + 1e-15, Math.min(1 - 1e-15, r));
  const z = Math.atanh(rr);
  const crit = studentTCritical(1 - level, nu);
  const se = z !== 0 && t !== 0 && Number.isFinite(t) ? Math.abs(z / t) : 1 / Math.sqrt(Math.max(1, n - params - 3));
  return [Math.tanh(z - crit * se), Math.tanh(z + crit * se)];
}

