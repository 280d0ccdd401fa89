/**
 * The solver choice (src/extract/solver-choice.ts) and the tolerance policy
 * (src/extract/tolerance-policy.ts): `auto` by crossover and cost model, requests honoured,
 * unknown solvers refused; the interface rules apply to interface entries only.
 */
import { describe, it, expect } from "vitest";
import { resolveSolver, chooseSolver, COMPRESSED_CROSSOVER, INTERFACE_COMPRESSED_CROSSOVER, type SolverChoice } from "../../src/extract/solver-choice.js";
import { compressedTolerances, compressionTolerance, krylovTolerance, FIELD_KRYLOV_TOLERANCE } from "../../src/extract/tolerance-policy.js";

describe("solver choice", () => {
  it("honours a request and refuses an unknown solver", () => {
    for (const s of ["direct", "iterative", "compressed"] as const) {
      expect(resolveSolver(s, 100_000, 3, "conductors")).toEqual({ solver: s, choice: "requested" });
      expect(resolveSolver(s, 10, 1, "interfaces")).toEqual({ solver: s, choice: "requested" });
    }
    expect(() => resolveSolver("sparse" as SolverChoice, 100, 1, "conductors")).toThrow(/unknown solver sparse/);
  });

  it("auto: compressed from the crossover, which lies lower with interface rows", () => {
    expect(INTERFACE_COMPRESSED_CROSSOVER).toBeLessThan(COMPRESSED_CROSSOVER);
    expect(resolveSolver("auto", COMPRESSED_CROSSOVER, 1, "conductors").solver).toBe("compressed");
    expect(resolveSolver("auto", COMPRESSED_CROSSOVER - 1, 1, "conductors").solver).not.toBe("compressed");
    expect(resolveSolver("auto", INTERFACE_COMPRESSED_CROSSOVER, 1, "interfaces").solver).toBe("compressed");
    expect(resolveSolver("auto", INTERFACE_COMPRESSED_CROSSOVER - 1, 1, "interfaces").solver).not.toBe("compressed");
  });

  it("auto below the crossover: direct for small n (n³ wins), iterative for large n, and the reason says why", () => {
    expect(chooseSolver(100, 1).solver).toBe("direct");
    expect(chooseSolver(6000, 1).solver).toBe("iterative");
    const r = resolveSolver("auto", 6000, 1, "conductors");
    expect(r.choice).toMatch(/^auto: estimated direct \d+\.\d\d s, iterative \d+\.\d\d s$/);
    // With interfaces LU counts twice Cholesky's flops: a size where Cholesky just wins goes iterative.
    let n = 100;
    while (chooseSolver(n, 1).solver === "direct") n += 10;
    const justDirect = n - 10;
    expect(resolveSolver("auto", justDirect, 1, "conductors").solver).toBe("direct");
    expect(resolveSolver("auto", justDirect, 1, "interfaces").solver).toBe("iterative");
  });
});

describe("tolerance policy", () => {
  it("conductor entries: blocks at tol/10, Krylov at tol/100 but never looser than the field rule", () => {
    expect(compressedTolerances(1e-4, "conductors")).toEqual({ compression: compressionTolerance(1e-4), krylov: krylovTolerance(1e-4) });
    expect(compressionTolerance(1e-4)).toBeCloseTo(1e-5, 18);
    expect(krylovTolerance(1e-4)).toBe(FIELD_KRYLOV_TOLERANCE);
    expect(krylovTolerance(1e-6)).toBeCloseTo(1e-8, 20);
    expect(compressionTolerance(1)).toBe(1e-3);
  });

  it("interface entries: blocks at 3·tol and GMRES at tol/10, each capped", () => {
    const t = compressedTolerances(1e-4, "interfaces");
    expect(t.compression).toBeCloseTo(3e-4, 18);
    expect(t.krylov).toBeCloseTo(1e-5, 18);
    expect(compressedTolerances(1, "interfaces")).toEqual({ compression: 1e-3, krylov: 1e-4 });
  });
});
