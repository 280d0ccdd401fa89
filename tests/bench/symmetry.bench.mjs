// Symmetry planes: what meshing by half (odd plane) or unfolding (images both) saves against
// the full model on the same panels, for a sphere pair, and the agreement of the matrices.
// Figures are printed, not asserted; compare ratios within one run (the machine is shared).
//   node tests/bench/symmetry.bench.mjs [quick]
import { loadavg } from "node:os";
import { sphereMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { extractMesh } from "../../dist/src/extract/extract-mesh.js";
import { reflectSurface } from "../../dist/src/bem/images.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";

const quick = process.argv.includes("quick");
console.log(`load average ${loadavg().map((x) => x.toFixed(2)).join(" ")} (figures on a shared machine scale with it)`);

async function timed(mesh, opts) {
  const t = performance.now();
  const r = await extractMesh(mesh, opts);
  return { r, s: (performance.now() - t) / 1e3 };
}

for (const level of quick ? [3] : [3, 4]) {
  for (const solver of level >= 4 ? ["iterative", "compressed"] : ["direct", "iterative"]) {
    const p = { ...sphereMesh({ radius: 1, level, center: [1.5, 0, 0] }), names: ["p"] };
    const mr = reflectSurface(p.positions, p.triangles, 1, [0, 0, 0]);
    const pair = concatMeshes([p, { ...p, ...mr, names: ["n"] }]);
    const full = await timed(pair, { solver });
    const odd = await timed(p, { solver, symmetry: [{ axis: "x", offset: 0, images: "odd" }] });
    const both = await timed(p, { solver, symmetry: [{ axis: "x", offset: 0, images: "both" }] });
    const c = full.r.maxwell;
    const dOdd = Math.abs(odd.r.maxwell[0] / (c[0] - c[1]) - 1);
    let dBoth = 0;
    for (let i = 0; i < 4; i++) dBoth = Math.max(dBoth, Math.abs(both.r.maxwell[i] / c[i] - 1));
    console.log(`pair of ${p.conductor.length}-panel spheres, ${solver.padEnd(10)}  full ${full.s.toFixed(2)} s  half odd ${odd.s.toFixed(2)} s (×${(full.s / odd.s).toFixed(2)}, |ΔC/C| ${dOdd.toExponential(1)})  half both ${both.s.toFixed(2)} s (×${(full.s / both.s).toFixed(2)}, max |ΔC/C| ${dBoth.toExponential(1)})  [${full.r.solver.solver}/${odd.r.solver.solver}]`);
  }
}
console.log(`load average ${loadavg().map((x) => x.toFixed(2)).join(" ")} at the end`);
await closeSharedPool();
