/**
 * mulberry32: a small seeded 32-bit pseudo-random generator returning floats in [0, 1)
 * (Tommy Ettinger's public-domain design). Used where a stream must be simple and stable
 * forever: the demo data, benchmark data and test graphs. Statistical Monte Carlo uses
 * `createRng` (rng.ts). Cost: O(1) per draw.
 * @example const rand = mulberry32(1); rand(); // 0.6270739405881613
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
