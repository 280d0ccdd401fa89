import { describe, it, expect } from "vitest";
import { execFileSync } from "node:child_process";
import fc from "fast-check";
import { Matrix } from "ml-matrix";
import { gemmNTSimd, kernelModuleBytes, simdAvailable, sleb, uleb, MR, NR, PACKING } from "../../src/linalg/wasm-kernel.js";
import { gemmNT, gemmNTScalar, denseKernelInUse } from "../../src/linalg/dense.js";
import { randomBlock, relDiff, rows } from "./random.js";

/** C + α·A·Bᵀ on entries j ≤ i + diag, by the definition (the oracle for both kernels). */
function definition(C: Float64Array, ldc: number, A: Float64Array, lda: number, B: Float64Array, ldb: number, m: number, p: number, kc: number, diag: number, alpha: number): Float64Array {
  const out = C.slice();
  for (let i = 0; i < m; i++)
    for (let j = 0; j < p && j <= i + diag; j++) {
      let d = 0;
      for (let q = 0; q < kc; q++) d += A[i * lda + q] * B[j * ldb + q];
      out[i * ldc + j] += alpha * d;
    }
  return out;
}

function maxAbsDiff(a: Float64Array, b: Float64Array): number {
  let e = 0;
  for (let i = 0; i < a.length; i++) e = Math.max(e, Math.abs(a[i] - b[i]));
  return e;
}

describe("WebAssembly SIMD kernel", () => {
  it("LEB128 encodings match the worked examples of DWARF 4, §7.6, Figures 22 and 23", () => {
    // Source: DWARF Debugging Information Format, Version 4 (2010), §7.6 (values from memory
    // of its two example tables; the WebAssembly binary format uses the same encoding).
    const u: [number, number[]][] = [[2, [0x02]], [127, [0x7f]], [128, [0x80, 0x01]], [129, [0x81, 0x01]], [130, [0x82, 0x01]], [12857, [0xb9, 0x64]]];
    for (const [v, bytes] of u) { const out: number[] = []; uleb(out, v); expect(out).toEqual(bytes); }
    const s: [number, number[]][] = [[2, [0x02]], [-2, [0x7e]], [127, [0xff, 0x00]], [-127, [0x81, 0x7f]], [128, [0x80, 0x01]], [-128, [0x80, 0x7f]], [129, [0x81, 0x01]], [-129, [0xff, 0x7e]]];
    for (const [v, bytes] of s) { const out: number[] = []; sleb(out, v); expect(out).toEqual(bytes); }
  });

  it("emits a module the engine validates, and Node ≥ 20 runs it", () => {
    expect(WebAssembly.validate(kernelModuleBytes())).toBe(true);
    // Other tile shapes are valid too (only NR even is required).
    expect(WebAssembly.validate(kernelModuleBytes(3, 6))).toBe(true);
    expect(() => kernelModuleBytes(4, 3)).toThrow(/even/);
    expect(simdAvailable()).toBe(true);
    expect(denseKernelInUse("auto")).toBe("wasm");
    expect(denseKernelInUse("js")).toBe("js");
  });

  it("SIMD and JavaScript kernels equal the definition on random shapes with ragged tails", () => {
    fc.assert(fc.property(
      fc.integer({ min: 1, max: 3 * MR * 4 + 3 }), fc.integer({ min: 1, max: 3 * NR * 4 + 1 }), fc.integer({ min: 1, max: 40 }),
      fc.integer({ min: -30, max: 60 }), fc.integer(), fc.constantFrom(-1, 1, 0.5), fc.integer({ min: 0, max: 5 }),
      (m, p, kc, diag, seed, alpha, pad) => {
        const lda = kc + pad, ldb = kc + 2 * pad + 1, ldc = p + pad;
        const aOff = 3, bOff = 5, cOff = 7;
        const A = randomBlock(m * lda + aOff, 1, seed), B = randomBlock(p * ldb + bOff, 1, seed + 1), C = randomBlock(m * ldc + cOff, 1, seed + 2);
        const want = C.slice(cOff);
        const ref = definition(want, ldc, A.subarray(aOff), lda, B.subarray(bOff), ldb, m, p, kc, diag, alpha);
        for (const run of [gemmNTSimd, gemmNTScalar]) {
          const out = C.slice();
          run(out, cOff, ldc, A, aOff, lda, B, bOff, ldb, m, p, kc, diag, alpha);
          if (out.subarray(0, cOff).some((v, i) => v !== C[i])) return false;
          if (maxAbsDiff(out.subarray(cOff), ref) > 1e-13) return false;
        }
        return true;
      }), { numRuns: 300, seed: 20240611 });
  });

  it("crosses its packing blocks: rows, column buffers and depth chunks", () => {
    // m, p and kc beyond one packed block of each, with ragged ends.
    const m = 2 * PACKING.rows + 22, p = PACKING.columns + 77, kc = 2 * PACKING.depth + 5, lda = kc + 1, ldb = kc, ldc = p + 3;
    const A = randomBlock(m, lda, 11), B = randomBlock(p, ldb, 12), C = randomBlock(m, ldc, 13);
    for (const [diag, alpha] of [[p, -1], [0, 1], [-70, -1], [PACKING.columns - 100, 1], [Number.MAX_SAFE_INTEGER, 1]]) {
      const ref = definition(C, ldc, A, lda, B, ldb, m, p, kc, diag, alpha);
      const out = C.slice();
      gemmNT(out, 0, ldc, A, 0, lda, B, 0, ldb, m, p, kc, diag, alpha, "wasm");
      expect(maxAbsDiff(out, ref)).toBeLessThan(1e-11);
    }
  });

  it("C − A·Bᵀ agrees with ml-matrix", () => {
    const m = 93, p = 71, kc = 96;
    const A = randomBlock(m, kc, 21), B = randomBlock(p, kc, 22), C = randomBlock(m, p, 23);
    // Reference: ml-matrix Matrix.mmul and transpose (general-purpose library from the registry).
    const ref = new Matrix(rows(C, m, p)).sub(new Matrix(rows(A, m, kc)).mmul(new Matrix(rows(B, p, kc)).transpose()));
    const want = Float64Array.from(ref.to1DArray());
    for (const kernel of ["wasm", "js"] as const) {
      const out = C.slice();
      gemmNT(out, 0, p, A, 0, kc, B, 0, kc, m, p, kc, p, -1, kernel);
      expect(relDiff(out, want)).toBeLessThan(1e-14);
    }
  });

  it("grows its memory for a long panel and keeps working afterwards", () => {
    const m = 8, p = 9000, kc = 64;
    const A = randomBlock(m, kc, 31), B = randomBlock(p, kc, 32), C = randomBlock(m, p, 33);
    const ref = definition(C, p, A, kc, B, kc, m, p, kc, p, -1);
    const out = C.slice();
    gemmNTSimd(out, 0, p, A, 0, kc, B, 0, kc, m, p, kc, p, -1);
    expect(maxAbsDiff(out, ref)).toBeLessThan(1e-12);
    const small = C.slice(0, 4 * 5);
    const sref = definition(small, 5, A, kc, B, kc, 4, 5, kc, 5, 1);
    gemmNTSimd(small, 0, 5, A, 0, kc, B, 0, kc, 4, 5, kc, 5, 1);
    expect(maxAbsDiff(small, sref)).toBeLessThan(1e-13);
  });

  it("without WebAssembly SIMD, auto falls back to the JavaScript kernel and the factors stay right", () => {
    // A fresh process (the availability is decided once per thread), on the compiled modules.
    const dist = new URL("../../dist/src/linalg/", import.meta.url).href;
    // CommonJS eval with an async body: "--input-type=module" would be inherited by the pool's workers.
    const script = `(async () => {
      const { denseKernelInUse } = await import("${dist}dense.js");
      const { simdAvailable } = await import("${dist}wasm-kernel.js");
      const { choleskyFactor, choleskySolve } = await import("${dist}cholesky.js");
      const { WorkerPool } = await import("${dist}pool.js");
      const n = 300, A = new Float64Array(n * n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = 0.5 ** Math.abs(i - j) + (i === j ? 1 : 0);
      const x = new Float64Array(n).fill(1), b = new Float64Array(n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) b[i] += A[i * n + j];
      const pool = new WorkerPool(2);
      await choleskyFactor(A, n, { pool, blockSize: 32 });
      await pool.close();
      choleskySolve(A, n, b, 1);
      let e = 0; for (let i = 0; i < n; i++) e = Math.max(e, Math.abs(b[i] - x[i]));
      console.log(JSON.stringify({ simd: simdAvailable(), used: denseKernelInUse("auto"), err: e }));
    })();`;
    const out = execFileSync(process.execPath, ["-e", script], { env: { ...process.env, SIGMESH_NO_WASM_SIMD: "1" }, encoding: "utf8" });
    const r = JSON.parse(out.trim().split("\n").pop()!);
    expect(r.simd).toBe(false);
    expect(r.used).toBe("js");
    // A·1 = b solved back to 1 (the matrix is diagonally dominant, condition number below 10).
    expect(r.err).toBeLessThan(1e-12);
  });
});
