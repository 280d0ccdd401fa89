// Remeshing of CAD-style flat patches (src/mesh/remesh.ts): time, panels and worst aspect ratio
// on rounded prisms tessellated as a CAD exporter does (caps fanned from one profile point,
// each side quad two slivers), of growing profile detail, alone and over a plate.
import { remeshFlatPatches } from "../../dist/src/mesh/remesh.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";

/** A prism over a rounded rectangle (half-sides a, b, radius r, k facets per quarter arc), height L, at z0. */
function roundedPrism(a, b, r, k, L, z0 = 0, name = "prism") {
  const prof = [];
  for (const [cx, cy, th0] of [[a - r, b - r, 0], [-(a - r), b - r, Math.PI / 2], [-(a - r), -(b - r), Math.PI], [a - r, -(b - r), 1.5 * Math.PI]]) {
    for (let i = 0; i <= k; i++) { const th = th0 + (i * Math.PI) / 2 / k; prof.push([cx + r * Math.cos(th), cy + r * Math.sin(th)]); }
  }
  const n = prof.length, pos = [], tri = [];
  for (const z of [z0, z0 + L]) for (const [x, y] of prof) pos.push(x, y, z);
  for (let i = 0; i < n; i++) { const j = (i + 1) % n; tri.push(i, j, n + j, i, n + j, n + i); }
  for (let i = 1; i < n - 1; i++) tri.push(0, i + 1, i);
  for (let i = 1; i < n - 1; i++) tri.push(n, n + i, n + i + 1);
  return { positions: Float64Array.from(Float32Array.from(pos)), triangles: Uint32Array.from(tri), conductor: new Uint32Array(tri.length / 3), names: [name] };
}

const cases = [
  ["electrode 10x10x4 mm, r 1 mm, 8 facets/quarter", roundedPrism(5e-3, 5e-3, 1e-3, 8, 4e-3)],
  ["electrode, 32 facets/quarter", roundedPrism(5e-3, 5e-3, 1e-3, 32, 4e-3)],
  ["electrode 3 mm over a 30x30x1 mm plate (r 0.2 mm)", concatMeshes([roundedPrism(5e-3, 5e-3, 1e-3, 8, 4e-3), roundedPrism(15e-3, 15e-3, 0.2e-3, 2, 1e-3, -4e-3, "plate")])],
];
for (const [label, mesh] of cases) {
  remeshFlatPatches(mesh); // warm-up
  const t0 = performance.now();
  const { summary: s } = remeshFlatPatches(mesh);
  const ms = performance.now() - t0;
  console.log(`${label}: ${s.trianglesBefore} -> ${s.trianglesAfter} panels, ${s.patches} patches + ${s.neighbours} neighbours, worst aspect ${s.worstAspectBefore.toFixed(0)} -> ${s.worstAspectAfter.toFixed(2)}, ${ms.toFixed(0)} ms`);
}
