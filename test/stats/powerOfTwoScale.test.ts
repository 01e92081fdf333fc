/**
 * Scaling by powers of two: the exponents against Python's math.frexp (the C library's frexp:
 * x = m·2^k with 0.5 ≤ |m| < 1, so the scale exponent is −k), exactness against IEEE 754
 * arithmetic, and the clamps at the ends of the double range.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { columnMagnitudes, columnScaleExponent, maxAbsFinite, MAX_SCALE_EXPONENT, MIN_SCALE_EXPONENT, scaleExponent, timesPowerOfTwo } from "../../src/stats/powerOfTwoScale.js";

describe("scaleExponent", () => {
  it("scaleExponent(|x|) is −k of math.frexp(x) = (m, k), clamped to [−1074, 1023]", () => {
    // python3 -c "import math; print(math.frexp(v))" for each v
    const frexp: Array<[number, number, number]> = [
      [1e200, 0.6532100883151302, 665],
      [1e155, 0.9322925914000258, 515],
      [1.7e308, 0.9456563898655606, 1024],
      [1e308, 0.5562684646268004, 1024],
      [3, 0.75, 2],
      [0.5, 0.5, 0],
      [1, 0.5, 1],
      [1e-300, 0.6696928794914171, -996],
    ];
    for (const [v, m, k] of frexp) {
      expect(scaleExponent(v), `${v}`).toBe(-k || 0);
      expect(timesPowerOfTwo(v, scaleExponent(v)), `${v}`).toBe(m);
    }
    // math.frexp(1e-310) = (0.5752618031559393, -1029) and math.frexp(5e-324) = (0.5, -1073): 2^1029 is not a double, so the clamp
    expect(scaleExponent(1e-310)).toBe(MAX_SCALE_EXPONENT);
    expect(scaleExponent(5e-324)).toBe(MAX_SCALE_EXPONENT);
    expect(timesPowerOfTwo(1e-310, 1029)).toBe(0.5752618031559393); // python3 math.frexp(1e-310)[0]
  });

  it("scaleExponent of 0, NaN and Infinity is 0, never −0", () => {
    for (const v of [0, NaN, Infinity, -1]) expect(Object.is(scaleExponent(v), 0), `${v}`).toBe(true);
    expect(MIN_SCALE_EXPONENT).toBe(-1074); // 2^−1074 = Number.MIN_VALUE (IEEE 754 binary64)
    expect(2 ** MIN_SCALE_EXPONENT).toBe(Number.MIN_VALUE);
  });

  it("maxAbsFinite skips NaN and ±Infinity", () => {
    expect(maxAbsFinite([1, -3, NaN, Infinity, -Infinity])).toBe(3);
    expect(maxAbsFinite([])).toBe(0);
    expect(maxAbsFinite([NaN])).toBe(0);
  });

  it("property: every finite non-zero x scaled by its exponent lies in [0.5, 1) unless the clamp binds (IEEE 754 binary64)", () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => {
        if (x === 0) return;
        const e = scaleExponent(Math.abs(x));
        const y = Math.abs(timesPowerOfTwo(x, e));
        if (e === MAX_SCALE_EXPONENT) expect(y).toBeLessThan(1);
        else {
          expect(y).toBeGreaterThanOrEqual(0.5);
          expect(y).toBeLessThan(1);
        }
      }),
    );
  });
});

describe("timesPowerOfTwo", () => {
  it("timesPowerOfTwo(x, e) is exact where the result is normal: scaling back gives x bit for bit (IEEE 754 scaleB)", () => {
    fc.assert(
      fc.property(fc.double({ min: -1e300, max: 1e300, noNaN: true }), fc.integer({ min: -1000, max: 1000 }), (x, e) => {
        const y = timesPowerOfTwo(x, e);
        if (x === 0 || Math.abs(x) < 2 ** -1022 || !Number.isFinite(y) || Math.abs(y) < 2 ** -1022) return; // outside the normal range
        expect(timesPowerOfTwo(y, -e)).toBe(x);
      }),
    );
  });

  it("timesPowerOfTwo handles exponents beyond ±1023 in steps, rounding an underflowing result once", () => {
    expect(timesPowerOfTwo(5e-324, 1074)).toBe(1); // 5e-324 is 2^−1074 (IEEE 754 binary64)
    expect(timesPowerOfTwo(1, -1074)).toBe(Number.MIN_VALUE);
    expect(timesPowerOfTwo(0.75, 2000)).toBe(Infinity);
    expect(timesPowerOfTwo(1e300, -2000)).toBe(1e300 * 2 ** -1000 * 2 ** -1000);
    expect(timesPowerOfTwo(3, -1)).toBe(1.5); // doc example
    expect(() => timesPowerOfTwo(1, Infinity)).toThrow(RangeError);
    expect(() => timesPowerOfTwo(1, 2000.5)).toThrow(RangeError);
  });
});

describe("columnScaleExponent", () => {
  it("columnScaleExponent caches per array and matches scaleExponent of the largest finite |value|", () => {
    const a = Float64Array.from([1, -1e200, NaN, 3]);
    expect(columnScaleExponent(a)).toBe(-665); // python3 math.frexp(1e200)[1] = 665
    expect(columnScaleExponent(a)).toBe(-665);
    expect(columnScaleExponent(Float64Array.from([1e-310, 3e-310]))).toBe(1023); // doc example: the clamp
  });
});

describe("columnMagnitudes", () => {
  it("gives the finite range, the largest and the smallest non-zero magnitude, skipping NaN and ±Infinity (definition, against a sort)", () => {
    fc.assert(
      fc.property(fc.array(fc.oneof(fc.double({ noNaN: false }), fc.constantFrom(0, -0, Infinity, -Infinity, NaN, 5e-324)), { minLength: 0, maxLength: 60 }), (xs) => {
        const m = columnMagnitudes(Float64Array.from(xs));
        const finite = xs.filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
        const nonzero = finite.map(Math.abs).filter((a) => a > 0);
        // == so that −0 and +0, equal values, may stand for each other
        expect(m.lo == (finite.length ? finite[0]! : Infinity)).toBe(true);
        expect(m.hi == (finite.length ? finite[finite.length - 1]! : -Infinity)).toBe(true);
        expect(m.maxAbs).toBe(finite.length ? Math.max(...finite.map(Math.abs)) : 0);
        expect(m.minAbs).toBe(nonzero.length ? Math.min(...nonzero) : Infinity);
        expect(m.maxAbs).toBe(maxAbsFinite(xs));
      }),
      { numRuns: 300 },
    );
  });

  it("is cached per array (columns are not changed after they are read)", () => {
    const v = Float64Array.of(1, -4, NaN);
    expect(columnMagnitudes(v)).toBe(columnMagnitudes(v));
    expect(columnMagnitudes(v)).toEqual({ lo: -4, hi: 1, maxAbs: 4, minAbs: 1 });
  });
});
