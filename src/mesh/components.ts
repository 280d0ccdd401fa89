/**
 * Connected components of a triangle mesh: triangles are connected when they share a
 * vertex (after welding). Union-find with path halving and union by index (R. E. Tarjan,
 * "Efficiency of a good but not linear set union algorithm", J. ACM 22 (1975) 215–225).
 */

/** Component of each triangle, numbered 0.. in order of first appearance. */
export function connectedComponents(triangles: Uint32Array, vertexCount: number): { count: number; component: Uint32Array } {
  const parent = new Int32Array(vertexCount);
  for (let v = 0; v < vertexCount; v++) parent[v] = v;
  const nt = triangles.length / 3;
  for (let t = 0; t < nt; t++) {
    const a = find(parent, triangles[3 * t]);
    const b = find(parent, triangles[3 * t + 1]);
    const c = find(parent, triangles[3 * t + 2]);
    const m = Math.min(a, b, c);
    parent[a] = m; parent[b] = m; parent[c] = m;
  }
  const label = new Int32Array(vertexCount).fill(-1);
  const component = new Uint32Array(nt);
  let count = 0;
  for (let t = 0; t < nt; t++) {
    const r = find(parent, triangles[3 * t]);
    if (label[r] < 0) label[r] = count++;
    component[t] = label[r];
  }
  return { count, component };
}

function find(parent: Int32Array, v: number): number {
  while (parent[v] !== v) {
    parent[v] = parent[parent[v]];
    v = parent[v];
  }
  return v;
}
