/**
 * Lower-triangle cross-products of a row-major tile, Z += XᵀX, as a small WebAssembly module
 * with 128-bit SIMD (two doubles per instruction).
 *
 * Terms: a *tile* is m rows of dpad doubles (row-major, dpad a multiple of 4) in the module's
 * memory; Z is a dpad × dpad row-major matrix there too. For every 4 × 4 block (i, j) with
 * j ≤ i, the kernel keeps the 16 products' sums in 8 two-lane registers, each lane summed over
 * the rows in order from zero, and adds them to Z at the end of the tile: per entry the same
 * operations in the same order as the scalar loop `s = 0; for t: s += X[t][i]·X[t][j]; Z += s`
 * (separate multiply and add, no fused multiply-add), so the results are identical to it.
 * Entries above the diagonal inside diagonal blocks are computed too and are to be ignored.
 *
 * The module is written out byte by byte below (WebAssembly Core Specification 2.0, §5 binary
 * format; SIMD opcodes from the fixed-width SIMD proposal, merged in 2.0).
 */

const I32 = 0x7f;
const V128 = 0x7b;
const PAGE = 65536;

const uleb = (n: number): number[] => {
  const out: number[] = [];
  do {
    let b = n & 0x7f;
    n >>>= 7;
    if (n !== 0) b |= 0x80;
    out.push(b);
  } while (n !== 0);
  return out;
};
const name = (s: string): number[] => [...uleb(s.length), ...[...s].map((c) => c.charCodeAt(0))];
const section = (id: number, body: number[]): number[] => [id, ...uleb(body.length), ...body];
const vec = (items: number[][]): number[] => [...uleb(items.length), ...items.flat()];

// Instructions used (opcodes from the specification's binary format).
const get = (l: number): number[] => [0x20, l];
const set = (l: number): number[] => [0x21, l];
const i32const = (v: number): number[] => [0x41, v]; // 0 ≤ v < 64: one-byte signed LEB128
const I32_ADD = 0x6a;
const I32_SUB = 0x6b;
const I32_MUL = 0x6c;
const I32_SHL = 0x74;
const I32_EQZ = 0x45;
const I32_GT_U = 0x4b;
const I32_GE_U = 0x4f;
const BLOCK = [0x02, 0x40];
const LOOP = [0x03, 0x40];
const END = 0x0b;
const BR = 0x0c;
const BR_IF = 0x0d;
const f64load = (off: number): number[] => [0x2b, 3, ...uleb(off)];
const v128load = (off: number): number[] => [0xfd, 0x00, 3, ...uleb(off)];
const v128store = (off: number): number[] => [0xfd, 0x0b, 3, ...uleb(off)];
const F64X2_SPLAT = [0xfd, 0x14];
const F64X2_ADD = [0xfd, 0xf0, 0x01];
const F64X2_MUL = [0xfd, 0xf2, 0x01];
const V128_ZERO = [0xfd, 0x0c, ...new Array<number>(16).fill(0)];

/** The module's bytes: memory "m" and function "c"(x, m, dpad, z), x and z byte offsets. */
function moduleBytes(): Uint8Array<ArrayBuffer> {
  // params 0 x, 1 m, 2 dpad, 3 z; i32 locals 4 i, 5 j, 6 t, 7 pa, 8 pb, 9 rowBytes, 10 zi;
  // v128 locals 11..18 the accumulators, 19 b01, 20 b23, 21 a.
  const [X, M, DP, Z, LI, LJ, T, PA, PB, RB, ZI, ACC, B01, B23, A] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 19, 20, 21];
  const blockRows = [0, 1, 2, 3];
  const body = [
    ...get(DP), ...i32const(3), I32_SHL, ...set(RB),
    ...i32const(0), ...set(LI),
    ...BLOCK, ...LOOP, // for i = 0; i < dpad; i += 4
    ...get(LI), ...get(DP), I32_GE_U, BR_IF, 1,
    ...i32const(0), ...set(LJ),
    ...BLOCK, ...LOOP, // for j = 0; j <= i; j += 4
    ...get(LJ), ...get(LI), I32_GT_U, BR_IF, 1,
    ...[0, 1, 2, 3, 4, 5, 6, 7].flatMap((k) => [...V128_ZERO, ...set(ACC + k)]),
    ...get(X), ...get(LI), ...i32const(3), I32_SHL, I32_ADD, ...set(PA),
    ...get(X), ...get(LJ), ...i32const(3), I32_SHL, I32_ADD, ...set(PB),
    ...get(M), ...set(T),
    ...BLOCK, ...LOOP, // for t = m; t > 0; t--
    ...get(T), I32_EQZ, BR_IF, 1,
    ...get(PB), ...v128load(0), ...set(B01),
    ...get(PB), ...v128load(16), ...set(B23),
    ...blockRows.flatMap((r) => [
      ...get(PA), ...f64load(8 * r), ...F64X2_SPLAT, ...set(A),
      ...get(ACC + 2 * r), ...get(A), ...get(B01), ...F64X2_MUL, ...F64X2_ADD, ...set(ACC + 2 * r),
      ...get(ACC + 2 * r + 1), ...get(A), ...get(B23), ...F64X2_MUL, ...F64X2_ADD, ...set(ACC + 2 * r + 1),
    ]),
    ...get(PA), ...get(RB), I32_ADD, ...set(PA),
    ...get(PB), ...get(RB), I32_ADD, ...set(PB),
    ...get(T), ...i32const(1), I32_SUB, ...set(T),
    BR, 0, END, END,
    // zi = z + 8 (i · dpad + j); Z rows i..i+3, columns j..j+3 += the accumulators
    ...get(Z), ...get(LI), ...get(DP), I32_MUL, ...get(LJ), I32_ADD, ...i32const(3), I32_SHL, I32_ADD, ...set(ZI),
    ...blockRows.flatMap((r) => [
      ...get(ZI), ...get(ZI), ...v128load(0), ...get(ACC + 2 * r), ...F64X2_ADD, ...v128store(0),
      ...get(ZI), ...get(ZI), ...v128load(16), ...get(ACC + 2 * r + 1), ...F64X2_ADD, ...v128store(16),
      ...get(ZI), ...get(RB), I32_ADD, ...set(ZI),
    ]),
    ...get(LJ), ...i32const(4), I32_ADD, ...set(LJ),
    BR, 0, END, END,
    ...get(LI), ...i32const(4), I32_ADD, ...set(LI),
    BR, 0, END, END,
    END,
  ];
  const func = [...vec([[7, I32], [11, V128]]), ...body];
  return new Uint8Array([
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00,
    ...section(1, vec([[0x60, ...vec([[I32], [I32], [I32], [I32]]), 0x00]])),
    ...section(3, vec([[0]])),
    ...section(5, vec([[0x00, 1]])),
    ...section(7, vec([[...name("c"), 0x00, 0], [...name("m"), 0x02, 0]])),
    ...section(10, vec([[...uleb(func.length), ...func]])),
  ]);
}

let compiled: WebAssembly.Module | null | undefined;

/** A SIMD cross-product kernel with its own memory; see {@link createSimdCrossProduct}. */
export interface SimdCrossProduct {
  /** The kernel's memory as doubles (at least the requested number). */
  readonly memory: Float64Array;
  /**
   * Z += XᵀX (lower 4 × 4 blocks) for the m-row tile of dpad columns at memory[x...], row-major,
   * into the dpad × dpad matrix at memory[z...]; dpad a multiple of 4. Cost: O(m · dpad²).
   */
  cross(x: number, m: number, dpad: number, z: number): void;
}

/**
 * Create a SIMD cross-product kernel whose memory holds `doubles` doubles, or undefined when
 * WebAssembly SIMD is not available or the memory would exceed 2 GiB (callers then use scalar
 * code with the same results). Cost: O(doubles) to allocate; the module is compiled once.
 * Source: WebAssembly Core Specification 2.0 (W3C, 2022), binary format and SIMD instructions.
 * @throws never
 * @example const k = createSimdCrossProduct(1024); k?.cross(0, 8, 4, 64)
 */
export function createSimdCrossProduct(doubles: number): SimdCrossProduct | undefined {
  if (compiled === undefined) {
    compiled = null;
    try {
      const bytes = moduleBytes();
      if (typeof WebAssembly !== "undefined" && WebAssembly.validate(bytes)) compiled = new WebAssembly.Module(bytes);
    } catch {
      compiled = null;
    }
  }
  if (compiled === null || !(doubles * 8 <= 2 ** 31)) return undefined;
  try {
    const instance = new WebAssembly.Instance(compiled, {});
    const mem = instance.exports.m as WebAssembly.Memory;
    const need = Math.ceil((doubles * 8) / PAGE);
    const have = mem.buffer.byteLength / PAGE;
    if (need > have) mem.grow(need - have);
    const c = instance.exports.c as (x: number, m: number, dpad: number, z: number) => void;
    const memory = new Float64Array(mem.buffer);
    return { memory, cross: (x, m, dpad, z) => c(x * 8, m, dpad, z * 8) };
  } catch {
    return undefined;
  }
}
