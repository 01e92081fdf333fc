/**
 * The Gram matrix (cross-products) of a few dozen columns over many rows.
 *
 * Terms: for columns c_1..c_p of length n, the *Gram matrix* G has G_jk = Σ_i c_j[i]·c_k[i]. The
 * rows are copied in tiles of TILE_ROWS into a row-major buffer (padded to a multiple of 4
 * columns with zeros) and multiplied by the WebAssembly SIMD kernel of `data/simdCrossProduct.ts`
 * (or, without WebAssembly SIMD, by the same operations in scalar code), a two-level summation:
 * within a tile from zero, then tile sums into G. The products are of the values as given:
 * callers pass columns scaled by powers of two to at most about 1 in magnitude
 * (`powerOfTwoScale.ts`; the default test's `rowPathFactor`), so that no product or sum
 * overflows or underflows whatever the data's units.
 */
import { createSimdCrossProduct, type SimdCrossProduct } from "../data/simdCrossProduct.js";

const TILE_ROWS = 256;

let kernel: SimdCrossProduct | undefined | null;
let kernelDoubles = 0;

/** A kernel whose memory holds at least `doubles` doubles (reused between calls), or null without SIMD. */
function kernelFor(doubles: number): SimdCrossProduct | null {
  if (kernel === null) return null;
  if (kernel === undefined || kernelDoubles < doubles) {
    const k = createSimdCrossProduct(Math.max(doubles, 1 << 16));
    kernel = k ?? null;
    kernelDoubles = k ? k.memory.length : 0;
  }
  return kernel;
}

/**
 * Gram matrix of the columns (p × p, row-major, symmetric), over all their rows or, with
 * `index`, over the rows index[0..m) (read in place: no gathered copy). Cost: O(m · p²).
 * @throws RangeError when the columns differ in length
 * @example gramMatrix([Float64Array.from([1, 2]), Float64Array.from([3, 4])]) // [5, 11, 11, 25]
 */
export function gramMatrix(columns: readonly Float64Array[], index?: Int32Array): Float64Array {
  const p = columns.length;
  const len = p > 0 ? columns[0]!.length : 0;
  for (const c of columns) if (c.length !== len) throw new RangeError(`columns of lengths ${len} and ${c.length}; pass columns of one length`);
  const n = index ? index.length : len;
  const dpad = Math.ceil(Math.max(1, p) / 4) * 4;
  const zSize = dpad * dpad;
  const tileSize = TILE_ROWS * dpad;
  const k = kernelFor(tileSize + zSize);
  const mem = k ? k.memory : new Float64Array(tileSize + zSize);
  mem.fill(0, 0, tileSize + zSize);
  for (let t0 = 0; t0 < n; t0 += TILE_ROWS) {
    const m = Math.min(TILE_ROWS, n - t0);
    for (let j = 0; j < p; j++) {
      const c = columns[j]!;
      if (index) for (let t = 0, o = j; t < m; t++, o += dpad) mem[o] = c[index[t0 + t]!]!;
      else for (let t = 0, o = j; t < m; t++, o += dpad) mem[o] = c[t0 + t]!;
    }
    if (k) k.cross(0, m, dpad, tileSize);
    else crossScalar(mem, m, dpad, tileSize);
  }
  const G = new Float64Array(p * p);
  for (let a = 0; a < p; a++) {
    for (let b = 0; b <= a; b++) {
      const v = mem[tileSize + a * dpad + b]!;
      G[a * p + b] = v;
      G[b * p + a] = v;
    }
  }
  return G;
}

/** Scalar Z += XᵀX over the tile (lower triangle), as the SIMD kernel computes it. */
function crossScalar(X: Float64Array, m: number, dpad: number, z: number): void {
  for (let i = 0; i < dpad; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let t = 0; t < m; t++) s += X[t * dpad + i]! * X[t * dpad + j]!;
      X[z + i * dpad + j] = X[z + i * dpad + j]! + s;
    }
  }
}
