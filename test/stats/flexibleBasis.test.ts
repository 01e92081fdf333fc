/**
 * The nested flexible basis against numpy and patsy: knots are numpy.quantile (its default
 * linear interpolation), term values follow the restricted cubic spline formula written
 * independently in scripts/gcm_reference.py, and levels 0–1 span patsy's natural cubic
 * regression spline. References: test/fixtures/gcm/basis.json and spline_span.json, written by
 * `python3 scripts/gcm_reference.py`.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { basisTermLabel, basisValue, fillBasisValues, flexibleBasis, MAX_BASIS_LEVEL, quantileSortedType7, scaleBasisTerm, splineConstants, type BasisTerm } from "../../src/stats/flexibleBasis.js";
import { leastSquaresQR } from "../../src/stats/linalg.js";

interface BasisSample {
  name: string;
  sorted: number[];
  quantiles: { p: number; q: number }[];
  levels: BasisTerm[][];
  probe_values: number[];
  term_values: number[][][];
}
interface BasisFixture { source: string; samples: BasisSample[] }
interface SpanFixture {
  source: string;
  x: number[];
  y: number[];
  knots: number[];
  fitted_patsy: number[];
  rank_ours: number;
  rank_patsy: number;
  rank_joined: number;
  max_abs_fitted_difference: number;
  fitted_scale: number;
}
const read = <T>(name: string): T => JSON.parse(readFileSync(new URL(`../fixtures/gcm/${name}`, import.meta.url), "utf8")) as T;
const basisRef = read<BasisFixture>("basis.json");
const spanRef = read<SpanFixture>("spline_span.json");

/** |a − b| within k units in the last place of the larger magnitude involved. */
function withinUlps(a: number, b: number, scale: number, k: number): boolean {
  return Math.abs(a - b) <= k * Number.EPSILON * Math.max(Math.abs(b), scale);
}

describe(`quantileSortedType7 and flexibleBasis against numpy (${basisRef.source})`, () => {
  it("quantileSortedType7(sorted, p) matches numpy.quantile (method='linear') to 2 ulps of the sample's magnitude at 68 orders per sample", () => {
    for (const s of basisRef.samples) {
      const v = Float64Array.from(s.sorted);
      const scale = Math.max(Math.abs(v[0]!), Math.abs(v[v.length - 1]!));
      for (const { p, q } of s.quantiles) expect(withinUlps(quantileSortedType7(v, p), q, scale, 2), `${s.name} p=${p}: ${quantileSortedType7(v, p)} vs ${q}`).toBe(true); // numpy.quantile
    }
  });

  it("flexibleBasis(sorted, 5) has the reference's terms per level: spline knots at the deduplicated quartiles, hinges at the odd 2^(ℓ+1)-ths strictly inside and not yet used", () => {
    for (const s of basisRef.samples) {
      const v = Float64Array.from(s.sorted);
      const scale = Math.max(Math.abs(v[0]!), Math.abs(v[v.length - 1]!));
      const got = flexibleBasis(v, MAX_BASIS_LEVEL).levels;
      expect(got.map((l) => l.length), s.name).toEqual(s.levels.map((l) => l.length)); // scripts/gcm_reference.py nested_basis
      got.forEach((terms, level) =>
        terms.forEach((term, k) => {
          const want = s.levels[level]![k]!;
          expect(term.kind, `${s.name} level ${level} term ${k}`).toBe(want.kind);
          if (term.kind === "spline" && want.kind === "spline") {
            expect(term.j).toBe(want.j);
            expect(term.knots.length).toBe(want.knots.length);
            term.knots.forEach((t, i) => expect(withinUlps(t, want.knots[i]!, scale, 2), `${s.name} knot ${i}`).toBe(true)); // numpy.quantile
          }
          if (term.kind === "hinge" && want.kind === "hinge") expect(withinUlps(term.knot, want.knot, scale, 2), `${s.name} hinge ${k}`).toBe(true); // numpy.quantile
        }),
      );
    }
  });

  it("basisValue(term, s) and fillBasisValues match the reference formula (Harrell 2015, eq. 2.25, over (t_K − t_1)²) to 1e-12 of the scale", () => {
    for (const s of basisRef.samples) {
      const levels = flexibleBasis(Float64Array.from(s.sorted), MAX_BASIS_LEVEL).levels;
      const probes = Float64Array.from(s.probe_values);
      const range = s.sorted[s.sorted.length - 1]! - s.sorted[0]!;
      const scale = Math.max(1, range, ...s.probe_values.map(Math.abs));
      levels.forEach((terms, level) =>
        terms.forEach((term, k) => {
          const want = s.term_values[level]![k]!; // scripts/gcm_reference.py term_values
          const filled = fillBasisValues(term, probes, new Float64Array(probes.length));
          probes.forEach((x, i) => {
            const where = `${s.name} ${basisTermLabel("s", term)} at ${x}`;
            expect(Math.abs(basisValue(term, x) - want[i]!), where).toBeLessThanOrEqual(1e-12 * scale);
            expect(Math.abs(filled[i]! - want[i]!), where).toBeLessThanOrEqual(1e-12 * scale);
          });
        }),
      );
    }
  });
});

describe(`levels 0–1 span patsy's natural cubic regression spline (${spanRef.source})`, () => {
  it("least squares on [1, s, spline terms] (leastSquaresQR) gives patsy cr(...)'s fitted values to 1e-9 of their scale; numpy found both bases of rank 5 and the joined one of rank 5", () => {
    expect([spanRef.rank_ours, spanRef.rank_patsy, spanRef.rank_joined]).toEqual([5, 5, 5]); // numpy.linalg.matrix_rank
    expect(spanRef.max_abs_fitted_difference).toBeLessThan(1e-9 * spanRef.fitted_scale); // numpy.linalg.lstsq on both bases
    const x = Float64Array.from(spanRef.x);
    const m = x.length;
    const sorted = Float64Array.from(x).sort();
    const basis = flexibleBasis(sorted, 1);
    const terms = basis.levels.flat();
    expect(terms.length).toBe(4);
    const knots = (terms[1] as Extract<BasisTerm, { kind: "spline" }>).knots;
    knots.forEach((t, i) => expect(withinUlps(t, spanRef.knots[i]!, 10, 2)).toBe(true)); // numpy.quantile
    const p = terms.length + 1;
    const X = new Float64Array(m * p);
    const cols = terms.map((t) => fillBasisValues(t, x, new Float64Array(m)));
    for (let i = 0; i < m; i++) {
      X[i * p] = 1;
      cols.forEach((c, j) => (X[i * p + j + 1] = c[i]!));
    }
    const fit = leastSquaresQR(X, m, p, spanRef.y)!;
    expect(fit.rank).toBe(5);
    let worst = 0;
    for (let i = 0; i < m; i++) {
      let f = 0;
      for (let j = 0; j < p; j++) f += X[i * p + j]! * fit.coef[j]!;
      worst = Math.max(worst, Math.abs(f - spanRef.fitted_patsy[i]!));
    }
    expect(worst).toBeLessThan(1e-9 * spanRef.fitted_scale); // patsy cr() fitted by numpy.linalg.lstsq
  });

  it("every spline term is linear beyond the outer knots and twice continuously differentiable at the knots (theorem: natural cubic spline)", () => {
    const sorted = Float64Array.from(spanRef.x).sort();
    const splines = flexibleBasis(sorted, 1).levels[1]! as Extract<BasisTerm, { kind: "spline" }>[];
    const t = splines[0]!.knots;
    const range = t[t.length - 1]! - t[0]!;
    for (const term of splines) {
      const f = (s: number) => basisValue(term, s);
      // second differences vanish left of t_1 (the term is 0 there) and right of t_K (linear)
      for (const s0 of [t[0]! - range, t[t.length - 1]! + 0.1 * range, t[t.length - 1]! + 3 * range]) {
        const h = 0.05 * range;
        expect(Math.abs(f(s0 + 2 * h) - 2 * f(s0 + h) + f(s0))).toBeLessThan(1e-9 * Math.max(1, Math.abs(f(s0))));
      }
      // first and second derivatives are continuous at each knot (one-sided difference quotients agree)
      for (const k of t) {
        const h = 1e-4 * range;
        const d1 = (f(k + h) - f(k)) / h - (f(k) - f(k - h)) / h;
        const d2 = (f(k + 2 * h) - 2 * f(k + h) + f(k)) / (h * h) - (f(k) - 2 * f(k - h) + f(k - 2 * h)) / (h * h);
        expect(Math.abs(d1)).toBeLessThan(1e-3);
        expect(Math.abs(d2)).toBeLessThan(1e-2 * (1 + 6 / range));
      }
    }
  });
});

describe("flexibleBasis edges and documented examples", () => {
  it("doc examples: quantileSortedType7([1, 2, 3, 4], 0.5) = 2.5; flexibleBasis(1..9, 2) has 1, 3, 4 terms; the hinge at 2 is 3 at 5; fillBasisValues(hinge 0) of [−1, 2] is [0, 2]", () => {
    expect(quantileSortedType7(Float64Array.from([1, 2, 3, 4]), 0.5)).toBe(2.5); // numpy.quantile([1, 2, 3, 4], 0.5) = 2.5
    expect(flexibleBasis(Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9]), 2).levels.map((l) => l.length)).toEqual([1, 3, 4]);
    expect(basisValue({ kind: "hinge", knot: 2 }, 5)).toBe(3);
    expect(Array.from(fillBasisValues({ kind: "hinge", knot: 0 }, Float64Array.from([-1, 2]), new Float64Array(2)))).toEqual([0, 2]);
  });

  it("few distinct values give fewer terms: one value gives only the linear term; two values no spline term (duplicate knots dropped), hinges only at knots interpolated strictly between them", () => {
    expect(flexibleBasis(Float64Array.from([2.5]), 5).levels.map((l) => l.length)).toEqual([1, 0, 0, 0, 0, 0]);
    const two = flexibleBasis(Float64Array.from([1, 1, 1, 4, 4]), 5).levels;
    expect(two.map((l) => l.length)).toEqual([1, 0, 1, 2, 4, 8]); // numpy.quantile([1, 1, 1, 4, 4], j/2^(l+1)): 2.5 at 5/8, ...
    expect(two[2]).toEqual([{ kind: "hinge", knot: 2.5 }]); // numpy.quantile([1, 1, 1, 4, 4], 0.625) = 2.5
    for (const t of two.slice(2).flat()) expect(t.kind === "hinge" && t.knot > 1 && t.knot < 4).toBe(true);
    expect(flexibleBasis(new Float64Array(0), 5).levels).toEqual([[{ kind: "linear" }]]);
    expect(flexibleBasis(Float64Array.from([1, 2, 3]), 0).levels).toEqual([[{ kind: "linear" }]]);
  });

  it("missing values stay missing: basisValue and fillBasisValues map NaN to NaN for every kind of term", () => {
    const terms = flexibleBasis(Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9]), 2).levels.flat();
    for (const term of terms) {
      expect(basisValue(term, NaN)).toBeNaN();
      const out = fillBasisValues(term, Float64Array.from([NaN, 3]), new Float64Array(2));
      expect(out[0]).toBeNaN();
      expect(out[1]).toBe(basisValue(term, 3));
    }
  });

  it("splineConstants give the same values as basisValue (a, b, scale of eq. 2.25) for random points (property)", () => {
    const knots = [0.3, 1.1, 2.0, 4.5, 9.0];
    fc.assert(
      fc.property(fc.double({ min: -5, max: 20, noNaN: true }), fc.integer({ min: 0, max: 2 }), (s, j) => {
        const term = { kind: "spline" as const, knots, j };
        const { tj, tk1, tk, a, b, scale } = splineConstants(term);
        const cube = (u: number) => (u > 0 ? u * u * u : 0);
        const f = (cube(s - tj) - a * cube(s - tk1) + b * cube(s - tk)) * scale;
        return Math.abs(f - basisValue(term, s)) <= 1e-12 * Math.max(1, Math.abs(f));
      }),
      { numRuns: 200, seed: 11 },
    );
  });

  it("bad input throws RangeError: an empty sample, an order outside [0, 1], a level outside 0..5", () => {
    expect(() => quantileSortedType7(new Float64Array(0), 0.5)).toThrow(RangeError);
    expect(() => quantileSortedType7(Float64Array.from([1]), 1.5)).toThrow(RangeError);
    expect(() => quantileSortedType7(Float64Array.from([1]), NaN)).toThrow(RangeError);
    expect(() => flexibleBasis(Float64Array.from([1, 2]), 6)).toThrow(RangeError);
    expect(() => flexibleBasis(Float64Array.from([1, 2]), 1.5)).toThrow(RangeError);
  });
});

describe("flexibleBasis at the ends of the double range", () => {
  it("quantileSortedType7 interpolates across a gap beyond the double range (regression: −1e308 to 1e308 gave ±Infinity)", () => {
    const v = Float64Array.from([-1e308, 1e308]);
    expect(quantileSortedType7(v, 0.5)).toBe(0); // Hyndman & Fan (1996) definition 7: −1e308 + 0.5·2e308, exact
    expect(quantileSortedType7(v, 0.25)).toBe(-5e307); // −1e308 + 0.25·2e308, exact
    expect(quantileSortedType7(Float64Array.from([-1.7e308, 1.7e308]), 1)).toBe(1.7e308);
    expect(flexibleBasis(v, 2).levels.flat().every((t) => t.kind !== "hinge" || Number.isFinite(t.knot))).toBe(true);
  });

  it("scaleBasisTerm(term, 2^k) at 2^k·s is 2^k times the term at s, bit for bit, for every reference term and probe (IEEE 754: powers of two scale without rounding)", () => {
    for (const k of [-300, -40, 40, 300]) {
      const f = 2 ** k;
      for (const smp of basisRef.samples) {
        const probes = Float64Array.from(smp.probe_values);
        const scaled = probes.map((x) => x * f);
        for (const term of flexibleBasis(Float64Array.from(smp.sorted), MAX_BASIS_LEVEL).levels.flat()) {
          const plain = fillBasisValues(term, probes, new Float64Array(probes.length));
          const viaScale = fillBasisValues(scaleBasisTerm(term, f), scaled, new Float64Array(probes.length));
          plain.forEach((v, i) => expect(viaScale[i], `${smp.name} ${basisTermLabel("s", term)} k=${k}`).toBe(v * f));
        }
      }
    }
    expect(scaleBasisTerm({ kind: "linear" }, 4)).toEqual({ kind: "linear" });
    expect(scaleBasisTerm({ kind: "hinge", knot: 1e200 }, 2 ** -665)).toEqual({ kind: "hinge", knot: 1e200 * 2 ** -665 }); // doc example
  });

  it("spline terms of values near 1e200 overflow when cubed raw, and are finite on values scaled by the column's power of two (regression: NaN design columns)", () => {
    const sorted = Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9], (v) => v * 1e200);
    const splines = flexibleBasis(sorted, 1).levels[1]!;
    const f = 2 ** -668; // 9e200·2^−668 ≈ 0.73 (python3 math.frexp(9e200) = (0.7348613493545214, 668))
    for (const term of splines) {
      const raw = fillBasisValues(term, sorted, new Float64Array(9));
      expect(raw.some((v) => !Number.isFinite(v))).toBe(true); // (9e200)³ overflows
      const scaled = fillBasisValues(scaleBasisTerm(term, f), sorted.map((v) => v * f), new Float64Array(9));
      expect(scaled.every((v) => Number.isFinite(v))).toBe(true);
      // the same numbers as the basis of 1..9, times the scale of the values (homogeneity of degree 1)
      const unit = fillBasisValues(flexibleBasis(Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9]), 1).levels[1]![splines.indexOf(term)]!, Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9]), new Float64Array(9));
      scaled.forEach((v, i) => expect(Math.abs(v - unit[i]! * 1e200 * f)).toBeLessThanOrEqual(1e-13 * Math.max(1, Math.abs(v))));
    }
  });
});
