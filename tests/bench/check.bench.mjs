// Mesh check on a ~1M-triangle multi-conductor mesh: 12 icospheres (level 6, 81 920 triangles
// each) on a 4 × 3 grid, one pair 10 µm apart (a narrow-gap warning), the others 0.5 mm apart.
// Prints the time of each stage and of the whole checkMesh; not a pass/fail test.
import { performance } from "node:perf_hooks";
import { sphereMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { buildEdgeTable, conductorTopology, orientSurfaces } from "../../dist/src/mesh/topology.js";
import { conductorQuality } from "../../dist/src/mesh/quality.js";
import { conductorProximity } from "../../dist/src/mesh/proximity.js";
import { checkMesh, checkMeshParallel } from "../../dist/src/mesh/check.js";
import { selfOverlaps } from "../../dist/src/mesh/self-overlap.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";

const r = 1e-3, pitch = 2 * r + 0.5e-3;
const parts = [];
for (let j = 0; j < 3; j++) for (let i = 0; i < 4; i++) {
  const shift = i === 1 && j === 0 ? -0.49e-3 : 0; // sphere 1 sits 10 µm from sphere 0
  parts.push(sphereMesh({ radius: r, level: 6, center: [i * pitch + shift, j * pitch, 0], name: `s${j}${i}` }));
}
const mesh = concatMeshes(parts);
const nt = mesh.triangles.length / 3;
console.log(`mesh: ${nt} triangles, ${mesh.positions.length / 3} vertices, ${mesh.names.length} conductors`);

function time(label, fn) {
  const t0 = performance.now();
  const out = fn();
  console.log(`${label.padEnd(28)} ${((performance.now() - t0) / 1000).toFixed(3)} s`);
  return out;
}
const table = time("edge table", () => buildEdgeTable(mesh));
time("closed/boundary counts", () => conductorTopology(mesh, table));
time("orientation", () => orientSurfaces(mesh, table));
time("quality", () => conductorQuality(mesh));
const found = time("proximity (BVH)", () => conductorProximity(mesh));
console.log(`  findings: ${found.map((f) => `${mesh.names[f.a]}/${mesh.names[f.b]} ${f.kind} ${(f.distance * 1e6).toFixed(3)} µm`).join("; ")}`);
const covering = time("self-overlaps (hash + BVH)", () => selfOverlaps(mesh));
console.log(`  conductors covering themselves: ${covering.length}`);
globalThis.gc?.();
const rep = time("checkMesh total", () => checkMesh(mesh));
console.log(`  failed: ${rep.failed}, pairs: ${rep.pairs.length}, closed: ${rep.conductors.every((c) => c.closed)}, orientation: ${[...new Set(rep.conductors.map((c) => c.orientation))].join(",")}`);
globalThis.gc?.();
{
  const t0 = performance.now();
  const par = await checkMeshParallel(mesh);
  console.log(`${"checkMeshParallel (2 threads)".padEnd(28)} ${((performance.now() - t0) / 1000).toFixed(3)} s`);
  console.log(`  same report as checkMesh: ${JSON.stringify(par) === JSON.stringify(rep)}`);
  await closeSharedPool();
}
{
  // Ten million copies of one face (issue 13): refused by the hash alone; the other stages run on
  // the one face left.
  const n = 10_000_000;
  const many = { positions: new Float64Array([0, 0, 0, 1e-3, 0, 0, 0, 1e-3, 0]), triangles: new Uint32Array(3 * n), conductor: new Uint32Array(n), names: ["many"] };
  for (let t = 0; t < n; t++) { many.triangles[3 * t + 1] = 1; many.triangles[3 * t + 2] = 2; }
  globalThis.gc?.();
  const f = time("10M repeated faces: found", () => selfOverlaps(many));
  console.log(`  repeated: ${f[0].repeated}`);
  const c = time("10M repeated faces: check", () => checkMesh(many));
  console.log(`  failed: ${c.failed}`);
}
console.log(`peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB`);
