import { describe, expect, it } from "vitest";
import { createRng, hashString32 } from "../../src/stats/rng.js";

/**
 * Reference stream written from the definitions in BigInt arithmetic (independent of the
 * module's 32-bit tricks): SplitMix32 seeding as documented in src/stats/rng.ts, then
 * xoshiro128** (Blackman & Vigna 2021, ACM TOMS 47(4):36: result = rotl(s1·5, 7)·9, then
 * t = s1 << 9, s2 ^= s0, s3 ^= s1, s1 ^= s2, s0 ^= s3, s2 ^= t, s3 = rotl(s3, 11)).
 */
function referenceStream(seed: number, key: string): () => bigint {
  const M = (1n << 32n) - 1n;
  const mul = (a: bigint, b: bigint) => (a * b) & M;
  const rotl = (x: bigint, k: bigint) => ((x << k) | (x >> (32n - k))) & M;
  const h = BigInt(hashString32(key));
  let s = (BigInt.asUintN(32, BigInt(seed)) ^ mul(h, 0x27d4eb2fn)) & M;
  const splitMix = (): bigint => {
    s = (s + 0x9e3779b9n) & M;
    let z = s;
    z = mul(z ^ (z >> 16n), 0x85ebca6bn);
    z = mul(z ^ (z >> 13n), 0xc2b2ae35n);
    return (z ^ (z >> 16n)) & M;
  };
  splitMix();
  s = (s + h) & M;
  const st = [splitMix(), splitMix(), splitMix(), splitMix()];
  if ((st[0]! | st[1]! | st[2]! | st[3]!) === 0n) st[0] = 1n;
  return () => {
    const r = mul(rotl(mul(st[1]!, 5n), 7n), 9n);
    const t = (st[1]! << 9n) & M;
    st[2]! ^= st[0]!;
    st[3]! ^= st[1]!;
    st[1]! ^= st[2]!;
    st[0]! ^= st[3]!;
    st[2]! ^= t;
    st[3] = rotl(st[3]!, 11n);
    return r;
  };
}

describe("rng", () => {
  it("createRng(seed, key).nextUint32 equals xoshiro128** with SplitMix32 seeding computed in BigInt", () => {
    for (const [seed, key] of [[1, ""], [42, "bench"], [2 ** 32 + 5, "a\u0000b"], [-3, "ünïcode"]] as const) {
      const rng = createRng(seed, key);
      const ref = referenceStream(seed, key);
      for (let i = 0; i < 2000; i++) expect(rng.nextUint32()).toBe(Number(ref()));
    }
  });

  it("nextInt(n) is Lemire's rejection method on the same stream: ⌊x·n / 2^32⌋ after rejecting low parts below 2^32 mod n", () => {
    for (const n of [1, 2, 3, 7, 1000, 2 ** 31 + 1, 3_000_000_000, 2 ** 32 - 1, 2 ** 32]) {
      const rng = createRng(9, `n=${n}`);
      const ref = referenceStream(9, `n=${n}`);
      const N = BigInt(n);
      const threshold = (2n ** 32n - N) % N;
      for (let i = 0; i < 500; i++) {
        let expected: bigint;
        if (n === 2 ** 32) expected = ref();
        else {
          let prod = ref() * N;
          while ((prod & 0xffffffffn) < threshold) prod = ref() * N;
          expected = prod >> 32n;
        }
        const got = rng.nextInt(n);
        expect(got).toBe(Number(expected));
        expect(got >= 0 && got < n).toBe(true);
      }
    }
    expect(() => createRng(1).nextInt(0)).toThrow(RangeError);
    expect(() => createRng(1).nextInt(2 ** 32 + 1)).toThrow(/1\.\.2\^32/);
  });

  it("nextFloat takes 27 + 26 bits of two draws: (hi·2^26 + lo) / 2^53, in [0, 1)", () => {
    const rng = createRng(5, "f");
    const ref = referenceStream(5, "f");
    for (let i = 0; i < 1000; i++) {
      const hi = ref() >> 5n;
      const lo = ref() >> 6n;
      const u = rng.nextFloat();
      expect(u).toBe(Number(hi * 2n ** 26n + lo) / 2 ** 53);
      expect(u >= 0 && u < 1).toBe(true);
    }
  });
});
