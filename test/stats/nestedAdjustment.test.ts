/**
 * NestedAdjustment against least squares on the rows: test/fixtures/gcm/nested.json (written by
 * `python3 scripts/gcm_reference.py`) holds numpy.cov of a generated design (250 rows; level 0:
 * two columns; level 1: an exact combination of them, a constant and a hinge; level 2: two more;
 * level 3: none) and three responses, and after each level the columns kept, the responses'
 * residual covariance, the GCV of the x side (response 0) and the y side (responses 1–2) and the
 * coefficients, all from numpy.linalg.lstsq on the rows.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { ALIAS_TOLERANCE, bestLevel, NestedAdjustment } from "../../src/stats/nestedAdjustment.js";

interface NestedLevel { kept: number; kept_columns: number[]; residual: number[]; gcv_x: number; gcv_y: number; coefficients: number[][] }
interface NestedFixture { source: string; n: number; columns: number; q: number; qx: number; column_level: number[]; cov: number[]; levels: NestedLevel[]; best_x: number; best_y: number }
const ref = JSON.parse(readFileSync(new URL("../fixtures/gcm/nested.json", import.meta.url), "utf8")) as NestedFixture;

const rel = (a: number, b: number) => (b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b));

/** Feed the fixture's covariances level by level; returns the fit and what addColumn returned per column. */
function fitFixture(): { fit: NestedAdjustment; added: boolean[] } {
  const { n, columns: A, q, cov } = ref;
  const d = A + q;
  const c = (a: number, b: number) => cov[a * d + b]!;
  const respCov = new Float64Array(q * q);
  for (let a = 0; a < q; a++) for (let b = 0; b < q; b++) respCov[a * q + b] = c(A + a, A + b);
  const fit = new NestedAdjustment(n, respCov, q);
  const added: boolean[] = [];
  for (let level = 0; level < ref.levels.length; level++) {
    for (let j = 0; j < A; j++) {
      if (ref.column_level[j] !== level) continue;
      const prev = Array.from({ length: j }, (_, k) => c(j, k));
      added.push(fit.addColumn(prev, c(j, j), Array.from({ length: q }, (_, r) => c(j, A + r))));
    }
    fit.endLevel();
  }
  return { fit, added };
}

describe(`NestedAdjustment against numpy.linalg.lstsq on the rows (${ref.source})`, () => {
  it("keeps the same columns as the reference: the exact combination (pivot below ALIAS_TOLERANCE) and the constant are dropped", () => {
    const { fit, added } = fitFixture();
    expect(ALIAS_TOLERANCE).toBe(1e-9);
    expect(added).toEqual([true, true, false, false, true, true, true]); // columns 2 (= a + 2b) and 3 (constant) dropped, as numpy's residual sums of squares say
    expect(fit.columnsAdded).toBe(ref.columns);
    expect(fit.keptColumns).toEqual(ref.levels[ref.levels.length - 1]!.kept_columns);
    expect(fit.snapshots.map((s) => s.kept)).toEqual(ref.levels.map((l) => l.kept)); // [2, 3, 5, 5]
  });

  it("the residual covariance after each level matches numpy's residuals (Bessel scale) to 1e-10 of the responses' scale", () => {
    const { fit } = fitFixture();
    const q = ref.q;
    ref.levels.forEach((want, level) => {
      const got = fit.snapshots[level]!.residual;
      for (let a = 0; a < q; a++)
        for (let b = 0; b < q; b++) {
          const scale = Math.sqrt(want.residual[a * q + a]! * want.residual[b * q + b]!);
          expect(Math.abs(got[a * q + b]! - want.residual[a * q + b]!), `level ${level} (${a},${b})`).toBeLessThanOrEqual(1e-10 * scale); // numpy.linalg.lstsq residuals
        }
    });
  });

  it("gcv(snapshot, side) = RSS/n/(1 − p/n)² matches the reference for both sides at every level to 1e-10, and bestLevel picks the first minimum", () => {
    const { fit } = fitFixture();
    ref.levels.forEach((want, level) => {
      const snap = fit.snapshots[level]!;
      expect(rel(fit.gcv(snap, 0, ref.qx), want.gcv_x), `x level ${level}`).toBeLessThanOrEqual(1e-10); // numpy residual sums of squares
      expect(rel(fit.gcv(snap, ref.qx, ref.q), want.gcv_y), `y level ${level}`).toBeLessThanOrEqual(1e-10);
    });
    // level 3 adds no column, so its GCV ties level 2's and the earlier level is kept
    expect(fit.gcv(fit.snapshots[3]!, 0, 1)).toBe(fit.gcv(fit.snapshots[2]!, 0, 1));
    expect(bestLevel(fit, 0, ref.qx)).toBe(ref.best_x);
    expect(bestLevel(fit, ref.qx, ref.q)).toBe(ref.best_y);
  });

  it("coefficients(r, kept) are numpy's least-squares coefficients of each response on the kept columns, at every level (1e-9)", () => {
    const { fit } = fitFixture();
    ref.levels.forEach((want, level) => {
      for (let r = 0; r < ref.q; r++) {
        const beta = fit.coefficients(r, want.kept);
        expect(beta.length).toBe(want.kept);
        const scale = Math.max(...want.coefficients[r]!.map(Math.abs));
        beta.forEach((b, k) => expect(Math.abs(b - want.coefficients[r]![k]!), `level ${level} response ${r} column ${k}`).toBeLessThanOrEqual(1e-9 * scale)); // numpy.linalg.lstsq
      }
    });
  });
});

describe("NestedAdjustment edges", () => {
  it("a column with no variance (0, negative, NaN or infinite) is not kept and changes nothing", () => {
    const fit = new NestedAdjustment(10, Float64Array.from([2, 0.5, 0.5, 1]), 2);
    expect(fit.addColumn([], 0, [0, 0])).toBe(false);
    expect(fit.addColumn([0], -1e-20, [0, 0])).toBe(false);
    expect(fit.addColumn([0, 0], NaN, [0, 0])).toBe(false);
    expect(fit.addColumn([0, 0, 0], Infinity, [0, 0])).toBe(false);
    const snap = fit.endLevel();
    expect(snap.kept).toBe(0);
    expect(Array.from(snap.residual)).toEqual([2, 0.5, 0.5, 1]);
    expect(fit.columnsAdded).toBe(4);
  });

  it("one column: the residual covariance is C − c cᵀ/v, the textbook partial covariance (common practice)", () => {
    const fit = new NestedAdjustment(50, Float64Array.from([4, 1, 1, 3]), 2);
    expect(fit.addColumn([], 2, [1, -0.5])).toBe(true);
    const s = fit.endLevel();
    // C_ab − c_a c_b / v with c = (1, −0.5), v = 2
    expect(s.residual[0]).toBeCloseTo(4 - 1 / 2, 14);
    expect(s.residual[1]).toBeCloseTo(1 + 0.5 / 2, 14);
    expect(s.residual[3]).toBeCloseTo(3 - 0.25 / 2, 14);
    expect(fit.coefficients(0, 1)[0]).toBeCloseTo(0.5, 14);
    expect(fit.coefficients(1, 1)[0]).toBeCloseTo(-0.25, 14);
  });

  it("gcv is Infinity once the parameters (columns + intercept) reach n", () => {
    const fit = new NestedAdjustment(3, Float64Array.from([1]), 1);
    fit.addColumn([], 1, [0.2]);
    fit.endLevel();
    fit.addColumn([0.1], 1, [0.3]);
    fit.endLevel();
    expect(Number.isFinite(fit.gcv(fit.snapshots[0]!, 0, 1))).toBe(true);
    expect(fit.gcv(fit.snapshots[1]!, 0, 1)).toBe(Infinity);
    expect(bestLevel(fit, 0, 1)).toBe(0);
  });
});
