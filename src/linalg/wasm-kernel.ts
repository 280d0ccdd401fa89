/**
 * The trailing-update kernel C ← C + α·A·Bᵀ in WebAssembly SIMD (f64x2), for the dense
 * factorisations of dense.ts, cholesky.ts and lu.ts.
 *
 * V8 cannot keep a 4×4 tile of scalar accumulators in registers for plain JavaScript and
 * bounds-checks every typed-array load; WebAssembly's v128 locals are register-allocated
 * and its loads are checked by guard pages. The module is emitted here byte by byte (no
 * toolchain), following the binary format of the WebAssembly Core Specification 2.0 (W3C,
 * 2022), §5 "Binary Format": LEB128 integers (§5.2.2), sections (§5.5.2), and the vector
 * instructions of §5.4.8 under the 0xFD prefix.
 *
 * Scheme (Goto & van de Geijn, "Anatomy of high-performance matrix multiplication",
 * ACM TOMS 34(3), 2008, §4–6): A and B are copied into the thread's own WebAssembly memory
 * as packed micro-panels — for each k, MR consecutive values of A (one per row of a strip)
 * and NR consecutive values of B (one per column) — padded with zeros to whole tiles. The
 * micro-kernel keeps an MR×NR tile of C in MR·NR/2 v128 accumulators: per k it loads NR/2
 * pairs of B and splats MR scalars of A. The tiles are written to a row-major buffer W,
 * which JavaScript adds, times α, into C under the lower-triangle mask of gemmNTScalar. Each
 * entry of C is read and written once per 2·kc flops, as in any right-looking update; that
 * copy back is the main cost outside the micro-kernel (measured with the CPU profiler: about
 * a quarter of the time at kc = 96 with 1024-column rows, over a third with 256-column rows).
 *
 * Every thread (the main one and each pool worker, each its own V8 isolate) builds its own
 * instance and private memory on first use, so no locking is needed.
 */

// ---------------------------------------------------------------------------------------
// Byte emitter: just the opcodes the kernel needs (Core Specification 2.0, §5.4).

const I32 = 0x7f, V128 = 0x7b;
const OP = {
  loop: 0x03, if: 0x04, end: 0x0b, brIf: 0x0d, return: 0x0f, call: 0x10,
  localGet: 0x20, localSet: 0x21, localTee: 0x22,
  i32Const: 0x41, i32Eqz: 0x45, i32LtS: 0x48, i32LeS: 0x4c,
  i32Add: 0x6a, i32Sub: 0x6b, i32Mul: 0x6c,
  simd: 0xfd,
} as const;
// Vector opcodes (u32 LEB128 after 0xFD), §5.4.8.
const SIMD = { v128Load: 0, v128Load64Splat: 10, v128Store: 11, f64x2Add: 240, f64x2Mul: 242 } as const;
const BLOCK_VOID = 0x40;

/** Append v as unsigned LEB128 (§5.2.2). */
export function uleb(out: number[], v: number): void {
  do {
    let b = v & 0x7f;
    v >>>= 7;
    if (v !== 0) b |= 0x80;
    out.push(b);
  } while (v !== 0);
}

/** Append v as signed LEB128 (§5.2.2), for i32.const. */
export function sleb(out: number[], v: number): void {
  for (;;) {
    const b = v & 0x7f;
    v >>= 7;
    if ((v === 0 && (b & 0x40) === 0) || (v === -1 && (b & 0x40) !== 0)) { out.push(b); return; }
    out.push(b | 0x80);
  }
}

/** A function body under construction. */
class Body {
  readonly code: number[] = [];
  op(...bytes: number[]): this { this.code.push(...bytes); return this; }
  get(i: number): this { this.code.push(OP.localGet); uleb(this.code, i); return this; }
  set(i: number): this { this.code.push(OP.localSet); uleb(this.code, i); return this; }
  tee(i: number): this { this.code.push(OP.localTee); uleb(this.code, i); return this; }
  i32(v: number): this { this.code.push(OP.i32Const); sleb(this.code, v); return this; }
  simd(op: number): this { this.code.push(OP.simd); uleb(this.code, op); return this; }
  /** Memory access with memarg (alignment exponent, byte offset), §5.4.6. */
  mem(op: number, align: number, offset: number): this {
    this.simd(op); uleb(this.code, align); uleb(this.code, offset); return this;
  }
  /** local[i] += delta (i32). */
  addTo(i: number, delta: number): this { return this.get(i).i32(delta).op(OP.i32Add).set(i); }
}

function section(out: number[], id: number, content: number[]): void {
  out.push(id);
  uleb(out, content.length);
  out.push(...content);
}

function vec(out: number[], items: number[][]): void {
  uleb(out, items.length);
  for (const it of items) out.push(...it);
}

function name(s: string): number[] {
  const b = [...new TextEncoder().encode(s)], out: number[] = [];
  uleb(out, b.length);
  out.push(...b);
  return out;
}

function funcBody(locals: [number, number][], body: Body): number[] {
  const f: number[] = [];
  uleb(f, locals.length);
  for (const [count, type] of locals) { uleb(f, count); f.push(type); }
  f.push(...body.code, OP.end);
  const out: number[] = [];
  uleb(out, f.length);
  out.push(...f);
  return out;
}

/**
 * micro(a, b, w, kc, ldw): the MR×NR tile W[i][j] (row i at byte w + i·ldw) = Σ_k a[k][i]·b[k][j]
 * over kc ≥ 1 packed steps (a advances MR doubles per k, b NR doubles).
 */
function microKernel(mr: number, nr: number): number[] {
  const A = 0, B = 1, W = 2, K = 3, LDW = 4;
  const nq = nr / 2, bv = 5, sv = bv + nq, acc = sv + 1;
  const f = new Body();
  f.op(OP.loop, BLOCK_VOID);
  for (let q = 0; q < nq; q++) f.get(B).mem(SIMD.v128Load, 4, 16 * q).set(bv + q);
  for (let i = 0; i < mr; i++) {
    f.get(A).mem(SIMD.v128Load64Splat, 3, 8 * i).set(sv);
    for (let q = 0; q < nq; q++) {
      const c = acc + i * nq + q;
      f.get(c).get(sv).get(bv + q).simd(SIMD.f64x2Mul).simd(SIMD.f64x2Add).set(c);
    }
  }
  f.addTo(A, 8 * mr).addTo(B, 8 * nr);
  f.get(K).i32(1).op(OP.i32Sub).tee(K).op(OP.brIf, 0, OP.end);
  for (let i = 0; i < mr; i++) {
    for (let q = 0; q < nq; q++) f.get(W).get(acc + i * nq + q).mem(SIMD.v128Store, 4, 16 * q);
    if (i + 1 < mr) f.get(W).get(LDW).op(OP.i32Add).set(W);
  }
  return funcBody([[nq + 1 + mr * nq, V128]], f);
}

/**
 * tiles(ap, bp, w, mt, nt, kc, ldw, diag): every tile (it, jt) of an mt×nt grid that reaches
 * the lower triangle — jt·NR ≤ it·MR + MR − 1 + diag — through micro. The strip `it` of A
 * sits at ap + it·MR·kc·8, the panel `jt` of B at bp + jt·NR·kc·8, the tile in W at
 * w + it·MR·ldw + jt·NR·8. Column panels outermost: one panel of B stays in L1 while the
 * strips of A stream from L2 (Goto & van de Geijn, §6).
 */
function tileLoop(mr: number, nr: number, microIndex: number): number[] {
  const AP = 0, BP = 1, WP = 2, MT = 3, NT = 4, KC = 5, LDW = 6, DIAG = 7;
  const JT = 8, IT = 9, BJ = 10, AI = 11, WI = 12, J0 = 13, ASTRIDE = 14;
  const f = new Body();
  // ASTRIDE = MR·kc·8 bytes per strip of A.
  f.get(KC).i32(8 * mr).op(OP.i32Mul).set(ASTRIDE);
  f.get(NT).op(OP.i32Eqz, OP.if, BLOCK_VOID, OP.return, OP.end);
  f.get(MT).op(OP.i32Eqz, OP.if, BLOCK_VOID, OP.return, OP.end);
  f.get(BP).set(BJ);
  f.op(OP.loop, BLOCK_VOID);
  {
    f.i32(0).set(IT).get(AP).set(AI);
    f.get(WP).get(JT).i32(8 * nr).op(OP.i32Mul).op(OP.i32Add).set(WI);
    f.get(JT).i32(nr).op(OP.i32Mul).get(DIAG).op(OP.i32Sub).i32(mr - 1).op(OP.i32Sub).set(J0);
    f.op(OP.loop, BLOCK_VOID);
    {
      // Skip tiles wholly above the diagonal: jt·NR − diag − (MR − 1) > it·MR.
      f.get(J0).get(IT).i32(mr).op(OP.i32Mul).op(OP.i32LeS, OP.if, BLOCK_VOID);
      f.get(AI).get(BJ).get(WI).get(KC).get(LDW).op(OP.call);
      uleb(f.code, microIndex);
      f.op(OP.end);
      f.get(AI).get(ASTRIDE).op(OP.i32Add).set(AI);
      f.get(WI).get(LDW).i32(mr).op(OP.i32Mul).op(OP.i32Add).set(WI);
      f.get(IT).i32(1).op(OP.i32Add).tee(IT).get(MT).op(OP.i32LtS, OP.brIf, 0);
    }
    f.op(OP.end);
    f.get(BJ).get(KC).i32(8 * nr).op(OP.i32Mul).op(OP.i32Add).set(BJ);
    f.get(JT).i32(1).op(OP.i32Add).tee(JT).get(NT).op(OP.i32LtS, OP.brIf, 0);
  }
  f.op(OP.end);
  return funcBody([[7, I32]], f);
}

/** The module bytes: imports env.memory, exports `tiles` (function 1; micro is function 0). */
export function kernelModuleBytes(mr: number = MR, nr: number = NR): Uint8Array<ArrayBuffer> {
  if (nr % 2 !== 0 || mr < 1 || nr < 2) throw new RangeError(`tile ${mr}×${nr}: NR must be even`);
  const out: number[] = [0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00];
  const microType = [0x60, 5, I32, I32, I32, I32, I32, 0];
  const tilesType = [0x60, 8, I32, I32, I32, I32, I32, I32, I32, I32, 0];
  const types: number[] = []; vec(types, [microType, tilesType]);
  section(out, 1, types);
  // Memory import with a minimum only (limits flag 0x00), §5.3.8.
  const imports: number[] = []; vec(imports, [[...name("env"), ...name("memory"), 0x02, 0x00, 1]]);
  section(out, 2, imports);
  const funcs: number[] = []; vec(funcs, [[0], [1]]);
  section(out, 3, funcs);
  const exports: number[] = []; vec(exports, [[...name("tiles"), 0x00, 1]]);
  section(out, 7, exports);
  const code: number[] = []; vec(code, [microKernel(mr, nr), tileLoop(mr, nr, 0)]);
  section(out, 10, code);
  return new Uint8Array(out);
}

// ---------------------------------------------------------------------------------------
// Per-thread instance and the packing driver.

/**
 * Rows and columns (even: pairs of f64 lanes) of the register tile. 4×4 (eight v128
 * accumulators) measured fastest of 4×4, 4×6, 6×4, 5×4, 3×8, 4×8, 8×4, 2×8 and 6×6 on this
 * project's Xeon (about 12 GFLOP/s against at most 10.5, m = p = 2000, kc = 96); the larger
 * tiles need more than the 16 xmm registers of x64 that V8 allocates (one of them kept as
 * its scratch register — from memory of V8's x64 register list, not measured here).
 */
export const MR = 4;
export const NR = 4;
/** Rows of A per packed block (kept in L2 while the panels of B pass over it); whole tiles. */
const MC = 16 * MR;
/**
 * Columns per W buffer (W = MC×NC doubles, 512 KiB, in L2 for the copy back); whole tiles.
 * Long rows matter more than a small W: the copy back streams C, and 1024-column row
 * segments ran the kernel-alone bench at 11–12 GFLOP/s against 8–9 with 256 (this machine).
 */
const NC = 256 * NR;
/** Depth per packed chunk: longer sums are split, each chunk added to C. */
const KC = 256;
/** Bytes of packed B per column block (kept in a 2 MiB L2 beside the A block and W). */
const B_BLOCK_BYTES = 1 << 20;
/** The packing blocks (rows of A, columns of W, depth), for tests that must cross them. */
export const PACKING = { rows: MC, columns: NC, depth: KC } as const;

type TilesFn = (ap: number, bp: number, w: number, mt: number, nt: number, kc: number, ldw: number, diag: number) => void;

let tiles: TilesFn | null = null;
let memory: WebAssembly.Memory | null = null;
let heap = new Float64Array(0);
let available: boolean | undefined;

/**
 * Whether this thread can run the WebAssembly SIMD kernel (compiled once, on first call).
 * SIGMESH_NO_WASM_SIMD=1 in the environment answers no, to run (or test) the fallback.
 */
export function simdAvailable(): boolean {
  if (available === undefined) {
    if (typeof process === "object" && process.env?.SIGMESH_NO_WASM_SIMD === "1") return (available = false);
    try {
      const bytes = kernelModuleBytes();
      if (typeof WebAssembly !== "object" || !WebAssembly.validate(bytes)) available = false;
      else {
        memory = new WebAssembly.Memory({ initial: 16 });
        const inst = new WebAssembly.Instance(new WebAssembly.Module(bytes), { env: { memory } });
        tiles = inst.exports.tiles as TilesFn;
        heap = new Float64Array(memory.buffer);
        available = true;
      }
    } catch {
      available = false;
    }
  }
  return available;
}

/** Make the thread's WebAssembly memory hold at least `doubles` values. */
function reserve(doubles: number): void {
  const m = memory!;
  const need = Math.ceil((8 * doubles) / 65536) - m.buffer.byteLength / 65536;
  if (need > 0) { m.grow(need); heap = new Float64Array(m.buffer); }
}

/**
 * C ← C + α·A·Bᵀ on the entries (i, j) of the m×p block with j ≤ i + diag, exactly as the
 * JavaScript gemmNTScalar of dense.ts (same arguments, same mask), through the SIMD kernel.
 * Throws when simdAvailable() is false.
 */
export function gemmNTSimd(
  C: Float64Array, cOff: number, ldc: number,
  A: Float64Array, aOff: number, lda: number,
  B: Float64Array, bOff: number, ldb: number,
  m: number, p: number, kc: number, diag: number, alpha: number,
): void {
  if (!simdAvailable()) throw new Error("WebAssembly SIMD is not available in this runtime");
  if (m <= 0 || p <= 0 || kc <= 0) return;
  // Any diag ≥ p means the whole block; clamped so it fits the module's i32 arguments.
  if (diag > p) diag = p;
  // Columns past the last row's reach are never touched.
  let pEff = m - 1 + diag + 1;
  if (pEff > p) pEff = p;
  if (pEff <= 0) return;
  const run = tiles!;
  const kStep = Math.min(kc, KC);
  // Goto & van de Geijn's loop order (§6): a block of NC columns of B packed once and kept
  // in L2 while every row block of A that reaches it is packed and passed over it.
  const ncMax = Math.min(NC, NR * Math.max(1, Math.floor(B_BLOCK_BYTES / (8 * NR * kStep))));
  // Layout in doubles: packed B block, packed A block, W.
  const bBase = 0, aBase = ncMax * kStep, wBase = aBase + MC * kStep;
  const ldw = ncMax;
  reserve(wBase + MC * ldw);
  const H = heap;
  for (let k0 = 0; k0 < kc; k0 += kStep) {
    const kw = Math.min(kStep, kc - k0);
    for (let jc = 0; jc < pEff; jc += ncMax) {
      const nc = Math.min(ncMax, pEff - jc);
      packPanels(H, bBase, B, bOff + jc * ldb + k0, ldb, nc, Math.ceil(nc / NR) * NR, kw, NR);
      // First row that reaches column jc: i + diag ≥ jc.
      for (let ic = Math.max(0, jc - diag); ic < m; ic += MC) {
        const mc = Math.min(MC, m - ic);
        const mPad = Math.ceil(mc / MR) * MR;
        // Columns of this block the rows reach: j ≤ ic + mc − 1 + diag.
        let ncEff = ic + mc + diag - jc;
        if (ncEff > nc) ncEff = nc;
        packPanels(H, aBase, A, aOff + ic * lda + k0, lda, mc, mPad, kw, MR);
        run(8 * aBase, 8 * bBase, 8 * wBase, mPad / MR, Math.ceil(ncEff / NR), kw, 8 * ldw, diag + ic - jc);
        addTile(C, cOff + ic * ldc + jc, ldc, H, wBase, ldw, mc, ncEff, diag + ic - jc, alpha);
      }
    }
  }
}

/**
 * Pack rows 0..rows of X (row r at xOff + r·ldx, kw values each) into micro-panels of
 * `width` rows: panel t holds, for each k, the values of rows t·width..t·width+width−1
 * consecutively; rows from `rows` to `padded` are zeros.
 */
function packPanels(H: Float64Array, base: number, X: Float64Array, xOff: number, ldx: number, rows: number, padded: number, kw: number, width: number): void {
  for (let r = 0; r < padded; r++) {
    const t = (r / width) | 0, lane = r - t * width;
    const d = base + t * width * kw + lane;
    if (r < rows) {
      const s = xOff + r * ldx;
      for (let k = 0; k < kw; k++) H[d + k * width] = X[s + k];
    } else {
      for (let k = 0; k < kw; k++) H[d + k * width] = 0;
    }
  }
}

/** C[i][j] += α·W[i][j] for the mc×nc block, only where j ≤ i + diag (block-relative). */
function addTile(C: Float64Array, cOff: number, ldc: number, H: Float64Array, wBase: number, ldw: number, mc: number, nc: number, diag: number, alpha: number): void {
  for (let i = 0; i < mc; i++) {
    let jEnd = i + diag + 1;
    if (jEnd > nc) jEnd = nc;
    const c = cOff + i * ldc, w = wBase + i * ldw;
    for (let j = 0; j < jEnd; j++) C[c + j] += alpha * H[w + j];
  }
}

/**
 * C ← C + α·A·Bᵀ on the whole m×p block of C (row-major, rows `ldc` apart), where entry
 * (i, t) of A is A[aOff + i·aRow + t·aCol] and entry (j, t) of B is B[bOff + j·bRow + t·bCol]
 * (t < kc): any mix of row- and column-major operands, so the products of the hierarchical
 * matrix (Dᵀ·X, Uᵀ stored by columns, X read as Xᵀ) need no transposed copy beyond the packing
 * the kernel does anyway. Same micro-kernel and blocking as gemmNTSimd; throws when
 * simdAvailable() is false.
 */
export function gemmStridedSimd(
  C: Float64Array, cOff: number, ldc: number,
  A: Float64Array, aOff: number, aRow: number, aCol: number,
  B: Float64Array, bOff: number, bRow: number, bCol: number,
  m: number, p: number, kc: number, alpha: number,
): void {
  if (!simdAvailable()) throw new Error("WebAssembly SIMD is not available in this runtime");
  if (m <= 0 || p <= 0 || kc <= 0) return;
  const run = tiles!;
  const kStep = Math.min(kc, KC);
  const ncMax = Math.min(NC, NR * Math.max(1, Math.floor(B_BLOCK_BYTES / (8 * NR * kStep))));
  const bBase = 0, aBase = ncMax * kStep, wBase = aBase + MC * kStep;
  const ldw = ncMax;
  reserve(wBase + MC * ldw);
  const H = heap;
  for (let k0 = 0; k0 < kc; k0 += kStep) {
    const kw = Math.min(kStep, kc - k0);
    for (let jc = 0; jc < p; jc += ncMax) {
      const nc = Math.min(ncMax, p - jc);
      packStrided(H, bBase, B, bOff + jc * bRow + k0 * bCol, bRow, bCol, nc, Math.ceil(nc / NR) * NR, kw, NR);
      for (let ic = 0; ic < m; ic += MC) {
        const mc = Math.min(MC, m - ic);
        const mPad = Math.ceil(mc / MR) * MR;
        packStrided(H, aBase, A, aOff + ic * aRow + k0 * aCol, aRow, aCol, mc, mPad, kw, MR);
        // diag = nc: every column of the tile (no triangle mask).
        run(8 * aBase, 8 * bBase, 8 * wBase, mPad / MR, Math.ceil(nc / NR), kw, 8 * ldw, nc);
        addTile(C, cOff + ic * ldc + jc, ldc, H, wBase, ldw, mc, nc, nc, alpha);
      }
    }
  }
}

/**
 * packPanels with strides: row r, depth t of the operand at xOff + r·sr + t·sc. The lanes of
 * a panel are the innermost loop, so a column-major operand (sr = 1) is read in runs.
 */
function packStrided(H: Float64Array, base: number, X: Float64Array, xOff: number, sr: number, sc: number, rows: number, padded: number, kw: number, width: number): void {
  for (let t0 = 0; t0 < padded; t0 += width) {
    const d0 = base + t0 * kw;
    const full = t0 + width <= rows;
    for (let t = 0; t < kw; t++) {
      const d = d0 + t * width, s = xOff + t * sc + t0 * sr;
      if (full) for (let l = 0; l < width; l++) H[d + l] = X[s + l * sr];
      else for (let l = 0; l < width; l++) H[d + l] = t0 + l < rows ? X[s + l * sr] : 0;
    }
  }
}
