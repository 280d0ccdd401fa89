/**
 * Test geometry: the icosphere — a regular icosahedron whose faces are split into four
 * `levels` times, every vertex projected onto the sphere. 20·4^levels triangles, outward winding.
 */
export function icosphere(levels: number, radius = 1): { positions: Float64Array; triangles: Uint32Array } {
  const t = (1 + Math.sqrt(5)) / 2;
  const pts: number[][] = [[-1, t, 0], [1, t, 0], [-1, -t, 0], [1, -t, 0], [0, -1, t], [0, 1, t], [0, -1, -t], [0, 1, -t],
    [t, 0, -1], [t, 0, 1], [-t, 0, -1], [-t, 0, 1]].map((p) => { const l = Math.hypot(...p); return p.map((x) => x / l); });
  let faces = [[0, 11, 5], [0, 5, 1], [0, 1, 7], [0, 7, 10], [0, 10, 11], [1, 5, 9], [5, 11, 4], [11, 10, 2], [10, 7, 6], [7, 1, 8],
    [3, 9, 4], [3, 4, 2], [3, 2, 6], [3, 6, 8], [3, 8, 9], [4, 9, 5], [2, 4, 11], [6, 2, 10], [8, 6, 7], [9, 8, 1]];
  for (let l = 0; l < levels; l++) {
    const mid = new Map<string, number>();
    const m = (a: number, b: number) => {
      const key = a < b ? `${a},${b}` : `${b},${a}`;
      let k = mid.get(key);
      if (k === undefined) {
        const p = pts[a].map((x, q) => (x + pts[b][q]) / 2); const len = Math.hypot(...p);
        k = pts.push(p.map((x) => x / len)) - 1; mid.set(key, k);
      }
      return k;
    };
    const next: number[][] = [];
    for (const [a, b, c] of faces) { const ab = m(a, b), bc = m(b, c), ca = m(c, a); next.push([a, ab, ca], [b, bc, ab], [c, ca, bc], [ab, bc, ca]); }
    faces = next;
  }
  return { positions: Float64Array.from(pts.flat().map((x) => x * radius)), triangles: Uint32Array.from(faces.flat()) };
}
