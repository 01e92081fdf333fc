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
  let s0 = splitMix32(mix);
  let s1 = splitMix32(mix);
  let s2 = splitMix32(mix);
  let s3 = splitMix32(mix);
  if ((s0 | s1 | s2 | s3) === 0) s0 = 1; // the all-zero state is a fixed point

  const nextUint32 = (): number => {
    const r = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    s2 ^= s0;
    s3 ^= s1;
    s1 ^= s2;
    s0 ^= s3;
    s2 ^= t;
    s3 = rotl(s3, 11);
    return r;
  };
  const nextFloat = (): number => {
    const hi = nextUint32() >>> 5; // 27 bits
    const lo = nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  };
  const nextInt = (n: number): number => {
    if (!(n >= 1 && n <= 4294967296)) throw new RangeError(`nextInt bound must be in 1..2^32, got ${n}`);
    // Lemire's nearly divisionless method with a 64-bit product split in two 32-bit halves.
    const bound = n >>> 0 || 4294967296;
    if (bound === 4294967296) return nextUint32();
    let x = nextUint32();
    let m = mul32(x, bound);
    if (m.lo < bound) {
      const threshold = (4294967296 - bound) % bound;
      while (m.lo < threshold) {
        x = nextUint32();
        m = mul32(x, bound);
      }
    }
    return m.hi;
  };
  return { nextUint32, nextFloat, nextInt };
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** Full 64-bit product of two uint32 as { hi, lo } uint32 halves. */
function mul32(a: number, b: number): { hi: number; lo: number } {
  const aLo = a & 0xffff;
  const aHi = a >>> 16;
  const bLo = b & 0xffff;
  const bHi = b >>> 16;
  const ll = aLo * bLo;
  const lh = aLo * bHi;
  const hl = aHi * bLo;
  const hh = aHi * bHi;
  const mid = (ll >>> 16) + (lh & 0xffff) + (hl & 0xffff);
  const lo = ((mid & 0xffff) * 65536 + (ll & 0xffff)) >>> 0;
  const hi = (hh + (lh >>> 16) + (hl >>> 16) + Math.floor(mid / 65536)) >>> 0;
  return { hi, lo };
}

/**
 * The stream key of a claim x ⫫ y | given: the names joined by U+0000, the conditioning set
 * sorted so its order does not matter. Cost: O(k log k) for k members.
 * @example streamKeyOfClaim({ x: "a", y: "b", given: ["d", "c"] }) // "a\u0000b\u0000c\u0000d"
 */
export function streamKeyOfClaim(claim: { x: string; y: string; given: readonly string[] }): string {
  return [claim.x, claim.y, ...[...claim.given].sort()].join("\u0000");
}
