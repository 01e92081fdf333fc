/**
 * Seeded pseudo-random numbers for Monte-Carlo p-values.
 *
 * Terms: a *generator* is xoshiro128** (Blackman & Vigna 2021, "Scrambled linear
 * pseudorandom number generators", ACM Transactions on Mathematical Software 47(4):36),
 * 128 bits of state, period 2^128 − 1, 32-bit outputs. A *stream* is one generator whose
 * state is derived from a pair (seed, key):
 *
 *   1. the key (a string, e.g. `streamKeyOfClaim(claim)`) is hashed to 32 bits with FNV-1a
 *      over its UTF-16 code units (Fowler–Noll–Vo, offset basis 2166136261, prime 16777619);
 *   2. the seed (any finite number; its integer part modulo 2^32 is used) and the hash are
 *      mixed with SplitMix32 steps (the 32-bit variant of Steele, Lea & Flood 2014,
 *      "Fast splittable pseudorandom number generators", OOPSLA) to fill the four state words.
 *
 * So the same (seed, claim) always gives the same numbers, whatever order the claims are
 * tested in, and different claims get unrelated streams.
 */

/** A stream of pseudo-random numbers. */
export interface Rng {
  /** Next 32-bit unsigned integer, uniform on [0, 2^32). */
  nextUint32(): number;
  /** Next double, uniform on [0, 1), with 53 random bits. */
  nextFloat(): number;
  /** Next integer, uniform on {0, …, n − 1} without modulo bias (Lemire 2019, ACM TOMACS 29(1):3). n ≤ 2^32. */
  nextInt(n: number): number;
}

/** FNV-1a 32-bit hash of a string's UTF-16 code units. Cost: O(length). */
export function hashString32(key: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < key.length; i++) {
    h ^= key.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

function splitMix32(state: { s: number }): number {
  state.s = (state.s + 0x9e3779b9) | 0;
  let z = state.s;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

/**
 * Seeded xoshiro128** stream for the pair (seed, key).
 * Cost: O(length of key) to create, O(1) per number.
 * Source: Blackman & Vigna (2021), ACM TOMS 47(4):36; seeding by SplitMix32 as described above.
 * @throws RangeError when `seed` is not a finite number
 * @example
 * const rng = createRng(1, "a|b|c");
 * rng.nextFloat(); // same value on every run
 */
export function createRng(seed: number, key = ""): Rng {
  if (!Number.isFinite(seed)) throw new RangeError(`rng seed must be a finite number, got ${seed}; pass an integer such as 1`);
  const seed32 = Number(BigInt.asUintN(32, BigInt(Math.trunc(seed))));
  const mix = { s: (seed32 ^ Math.imul(hashString32(key), 0x27d4eb2f)) | 0 };
  // A second input word so that (seed, key) pairs with equal xor still differ.
  splitMix32(mix);
  mix.s = (mix.s + hashString32(key)) | 0;
  // The four state words live in one Int32Array (no boxed numbers in closures).
  const st = new Int32Array(4);
  st[0] = splitMix32(mix);
  st[1] = splitMix32(mix);
  st[2] = splitMix32(mix);
  st[3] = splitMix32(mix);
  if ((st[0]! | st[1]! | st[2]! | st[3]!) === 0) st[0] = 1; // the all-zero state is a fixed point

  const nextUint32 = (): number => {
    const s0 = st[0]!, s1 = st[1]!, s2 = st[2]! ^ s0, s3 = st[3]! ^ s1;
    const x = Math.imul(s1, 5);
    const r = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
    st[0] = s0 ^ s3;
    st[1] = s1 ^ s2;
    st[2] = s2 ^ (s1 << 9);
    st[3] = (s3 << 11) | (s3 >>> 21);
    return r;
  };
  const nextFloat = (): number => {
    const hi = nextUint32() >>> 5; // 27 bits
    const lo = nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  };
  const nextInt = (n: number): number => {
    if (!(n >= 1 && n <= 4294967296)) throw new RangeError(`nextInt bound must be in 1..2^32, got ${n}`);
    // Lemire's nearly divisionless method: the 64-bit product x·bound in two 32-bit halves
    // (hi, lo), computed from 16-bit pieces of x in doubles (exact below 2^53), no allocation.
    const bound = n >>> 0 || 4294967296;
    if (bound === 4294967296) return nextUint32();
    let x = nextUint32();
    let lo = mulLow32(x, bound);
    if (lo < bound) {
      const threshold = (4294967296 - bound) % bound;
      while (lo < threshold) {
        x = nextUint32();
        lo = mulLow32(x, bound);
      }
    }
    return mulHigh32(x, bound);
  };
  return { nextUint32, nextFloat, nextInt };
}

/** Low 32 bits of the product of two uint32, as a uint32. */
function mulLow32(a: number, b: number): number {
  return Math.imul(a, b) >>> 0;
}

/** High 32 bits of the 64-bit product of two uint32: (a_hi·b + ⌊a_lo·b / 2^16⌋) / 2^16, all exact in doubles. */
function mulHigh32(a: number, b: number): number {
  const aLo = a & 0xffff;
  const aHi = a >>> 16;
  // aHi·b < 2^48 and aLo·b < 2^48: exact; the sum of the shifted parts is exact too.
  return Math.floor((aHi * b + Math.floor((aLo * b) / 65536)) / 65536) >>> 0;
}

/**
 * The stream key of a claim x ⫫ y | given: the names joined by U+0000, the conditioning set
 * sorted so its order does not matter. Cost: O(k log k) for k members.
 * @example streamKeyOfClaim({ x: "a", y: "b", given: ["d", "c"] }) // "a\u0000b\u0000c\u0000d"
 */
export function streamKeyOfClaim(claim: { x: string; y: string; given: readonly string[] }): string {
  return [claim.x, claim.y, ...[...claim.given].sort()].join("\u0000");
}
