/**
 * Mantel–Haenszel analysis of K stratified 2 × 2 tables.
 *
 * Terms: stratum k has the table [[a_k, b_k], [c_k, d_k]] (rows: x level 1, 2; columns:
 * y level 1, 2) and total n_k. The *Mantel–Haenszel common odds ratio* is
 *   OR_MH = Σ R_k / Σ S_k,  R_k = a_k d_k / n_k,  S_k = b_k c_k / n_k
 * (Mantel & Haenszel 1959, Journal of the National Cancer Institute 22:719–748). Its log has the
 * *Robins–Breslow–Greenland variance* (Robins, Breslow & Greenland 1986, Biometrics 42:311–323)
 *   Var(ln OR_MH) = Σ P_k R_k / (2 (ΣR)²) + Σ (P_k S_k + Q_k R_k) / (2 ΣR ΣS) + Σ Q_k S_k / (2 (ΣS)²),
 *   P_k = (a_k + d_k)/n_k, Q_k = (b_k + c_k)/n_k.
 * The *Cochran–Mantel–Haenszel statistic* compares Σ a_k with its expectation under
 * conditional independence, E_k = (a_k + b_k)(a_k + c_k)/n_k, with the hypergeometric variance
 * V_k = (a+b)(c+d)(a+c)(b+d) / (n_k² (n_k − 1)):
 *   CMH = (|Σ(a_k − E_k)| − δ)² / Σ V_k on 1 df, δ = 0 (no correction) or
 *   δ = min(½, |Σ(a_k − E_k)|) (continuity correction, Mantel & Haenszel 1959).
 * Strata with n_k < 2 carry no information and are skipped (counted in `strataSkipped`).
 */
import { erfc } from "./special.js";
import { chiSquareUpper } from "./pvalues.js";

export interface MantelHaenszelResult {
  /** Mantel–Haenszel common odds ratio (NaN when Σ R = 0 or Σ S = 0). */
  oddsRatio: number;
  /** Robins–Breslow–Greenland confidence interval of the common odds ratio. */
  ci: [number, number];
  /** Robins–Breslow–Greenland variance of ln OR_MH. */
  varLogOr: number;
  /** Cochran–Mantel–Haenszel statistic without continuity correction, and its p-value (1 df). */
  cmh: number;
  p: number;
  /** With the continuity correction, and its p-value. */
  cmhCorrected: number;
  pCorrected: number;
  strataUsed: number;
  strataSkipped: number;
}

/** Standard normal quantile: Acklam's rational approximation (relative error 1.15e-9) refined by one Halley step. */
function normalQuantile(p: number): number {
  const a = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
  const b = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
  const c = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
  const d = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
  const pl = 0.02425;
  let x: number;
  if (p < pl) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = (((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1);
  } else if (p <= 1 - pl) {
    const q = p - 0.5;
    const r = q * q;
    x = ((((((a[0]! * r + a[1]!) * r + a[2]!) * r + a[3]!) * r + a[4]!) * r + a[5]!) * q) / (((((b[0]! * r + b[1]!) * r + b[2]!) * r + b[3]!) * r + b[4]!) * r + 1);
  } else {
    const q = Math.sqrt(-2 * Math.log(1 - p));
    x = -(((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1);
  }
  // One Halley step on Φ(x) − p, Φ(x) = erfc(−x/√2)/2.
  const e = 0.5 * erfc(-x / Math.SQRT2) - p;
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
  return x - u / (1 + (x * u) / 2);
}

/**
 * Mantel–Haenszel common odds ratio with the Robins–Breslow–Greenland confidence interval, and
 * the Cochran–Mantel–Haenszel statistic with and without continuity correction.
 * Cost: O(K).
 * Sources: Mantel & Haenszel (1959), J. Natl Cancer Inst. 22:719–748; Robins, Breslow &
 * Greenland (1986), Biometrics 42:311–323.
 * @throws RangeError when a table is not four finite non-negative counts, or level is not in (0, 1)
 * @example
 * mantelHaenszel([[10, 20, 30, 40]]).oddsRatio // (10·40)/(20·30) = 0.6667
 */
export function mantelHaenszel(tables: readonly ArrayLike<number>[], level = 0.95): MantelHaenszelResult {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must be in (0, 1), got ${level}`);
  let sumR = 0, sumS = 0, sumPR = 0, sumPSQR = 0, sumQS = 0;
  let delta = 0, sumV = 0;
  let used = 0, skipped = 0;
  tables.forEach((t, k) => {
    if (t.length !== 4) throw new RangeError(`stratum ${k}: a 2×2 table needs 4 counts, got ${t.length}`);
    const [a, b, c, d] = [t[0]!, t[1]!, t[2]!, t[3]!];
    for (const v of [a, b, c, d]) {
      if (!(v >= 0) || !Number.isFinite(v)) throw new RangeError(`stratum ${k}: count ${v} must be a finite non-negative number`);
    }
    const n = a + b + c + d;
    if (n < 2) {
      skipped++;
      return;
    }
    used++;
    const R = (a * d) / n;
    const S = (b * c) / n;
    const P = (a + d) / n;
    const Q = (b + c) / n;
    sumR += R;
    sumS += S;
    sumPR += P * R;
    sumPSQR += P * S + Q * R;
    sumQS += Q * S;
    delta += a - ((a + b) * (a + c)) / n;
    sumV += ((a + b) * (c + d) * (a + c) * (b + d)) / (n * n * (n - 1));
  });
  const oddsRatio = sumR > 0 && sumS > 0 ? sumR / sumS : NaN;
  const varLogOr = sumR > 0 && sumS > 0
    ? sumPR / (2 * sumR * sumR) + sumPSQR / (2 * sumR * sumS) + sumQS / (2 * sumS * sumS)
    : NaN;
  const z = normalQuantile(1 - (1 - level) / 2);
  const half = z * Math.sqrt(varLogOr);
  const ci: [number, number] = Number.isFinite(oddsRatio)
    ? [Math.exp(Math.log(oddsRatio) - half), Math.exp(Math.log(oddsRatio) + half)]
    : [NaN, NaN];
  const cmh = sumV > 0 ? (delta * delta) / sumV : NaN;
  const yates = Math.min(0.5, Math.abs(delta));
  const cmhCorrected = sumV > 0 ? (Math.abs(delta) - yates) ** 2 / sumV : NaN;
  const p = Number.isFinite(cmh) ? chiSquareUpper(cmh, 1) : NaN;
  const pCorrected = Number.isFinite(cmhCorrected) ? chiSquareUpper(cmhCorrected, 1) : NaN;
  return { oddsRatio, ci, varLogOr, cmh, p, cmhCorrected, pCorrected, strataUsed: used, strataSkipped: skipped };
}
