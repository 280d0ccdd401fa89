/** Seeded test matrices (a small LCG keeps failures reproducible without a dependency). */
export function rng(seed: number): () => number {
  let s = seed >>> 0 || 1;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

/** Random symmetric positive definite n×n: G·Gᵀ/n + I, condition number a few tens. */
export function randomSpd(n: number, seed: number, out: Float64Array = new Float64Array(n * n)): Float64Array {
  const r = rng(seed), G = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) G[i] = r() - 0.5;
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let q = 0; q < n; q++) s += G[i * n + q] * G[j * n + q];
      s = s / n + (i === j ? 1 : 0);
      out[i * n + j] = s;
      out[j * n + i] = s;
    }
  return out;
}

/** Random non-symmetric, diagonally weighted n×n (well conditioned, pivoting still needed). */
export function randomGeneral(n: number, seed: number, out: Float64Array = new Float64Array(n * n)): Float64Array {
  const r = rng(seed);
  for (let i = 0; i < n * n; i++) out[i] = r() - 0.5;
  // A large entry off the diagonal in each row forces row exchanges.
  for (let i = 0; i < n; i++) out[i * n + ((i * 7 + 3) % n)] += 2 + r();
  return out;
}

export function randomBlock(n: number, k: number, seed: number): Float64Array {
  const r = rng(seed), B = new Float64Array(n * k);
  for (let i = 0; i < n * k; i++) B[i] = r() * 2 - 1;
  return B;
}

/** Largest |a − b| over the arrays, relative to the largest |b|. */
export function relDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let d = 0, m = 0;
  for (let i = 0; i < b.length; i++) { d = Math.max(d, Math.abs(a[i] - b[i])); m = Math.max(m, Math.abs(b[i])); }
  return d / (m || 1);
}

/** Row-major n×n to the array of rows ml-matrix takes. */
export function rows(A: Float64Array, n: number, k: number = n): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < n; i++) out.push(Array.from(A.subarray(i * k, i * k + k)));
  return out;
}
