import { describe, expect, it } from "vitest";
import { createSimdCrossProduct } from "../../src/data/simdCrossProduct.js";

// The reference is the definition: Z[i][j] += Σ_t X[t][i]·X[t][j], summed over t in row order from
// zero with separate multiply and add (plain IEEE double arithmetic, common practice); the kernel
// promises the identical operations, so the comparison is bit for bit (Object.is).

function seeded(seed: number): () => number {
  let s = seed;
  return () => ((s = (s * 16807) % 2147483647) / 2147483647) * 2 - 1;
}

describe("createSimdCrossProduct", () => {
  const kernel = createSimdCrossProduct(64 * 1024);
  const note = kernel ? "WebAssembly SIMD available" : "WebAssembly SIMD not available: nothing to compare";

  it(`createSimdCrossProduct(n).cross adds the lower-triangle products bit for bit as the scalar definition (${note})`, () => {
    if (!kernel) return void expect(createSimdCrossProduct(16)).toBeUndefined();
    const mem = kernel.memory;
    expect(mem.length).toBeGreaterThanOrEqual(64 * 1024);
    const rnd = seeded(7);
    for (const [m, dpad] of [[0, 4], [1, 4], [7, 8], [33, 12], [256, 52]] as const) {
      const x = 8; // an offset, to check it is honoured
      const z = x + m * dpad + 3;
      for (let k = 0; k < m * dpad; k++) mem[x + k] = rnd() * 10 ** Math.floor(rnd() * 6);
      const z0 = Float64Array.from({ length: dpad * dpad }, () => rnd());
      mem.set(z0, z);
      kernel.cross(x, m, dpad, z);
      for (let i = 0; i < dpad; i++) {
        for (let j = 0; j <= i; j++) {
          let s = 0;
          for (let t = 0; t < m; t++) s += mem[x + t * dpad + i]! * mem[x + t * dpad + j]!;
          expect(Object.is(mem[z + i * dpad + j], z0[i * dpad + j]! + s)).toBe(true);
        }
      }
      // outside the diagonal blocks the upper triangle is untouched
      if (dpad > 4) expect(mem[z + 0 * dpad + dpad - 1]).toBe(z0[dpad - 1]);
      // the tile itself is not changed: a second call adds the same sums again
      const once = mem.slice(z, z + dpad * dpad);
      kernel.cross(x, m, dpad, z);
      const [i, j] = [dpad - 1, 1];
      let s = 0;
      for (let t = 0; t < m; t++) s += mem[x + t * dpad + i]! * mem[x + t * dpad + j]!;
      expect(Object.is(mem[z + i * dpad + j], once[i * dpad + j]! + s)).toBe(true);
    }
  });

  it("createSimdCrossProduct gives separate memories and refuses more than 2 GiB", () => {
    const a = createSimdCrossProduct(100);
    const b = createSimdCrossProduct(100);
    if (!a || !b) return;
    a.memory[0] = 5;
    expect(b.memory[0]).toBe(0);
    expect(createSimdCrossProduct(2 ** 28 + 1)).toBeUndefined();
  });
});
