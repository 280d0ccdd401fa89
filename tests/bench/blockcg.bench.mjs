// Block PCG against column-wise PCG (src/linalg/block-cg.ts, cg.ts): the Galerkin compressed
// solve of pad arrays (k = pads right-hand sides) and of a sphere (k = 1), same operator, same
// preconditioner, same tolerance; and the solvers' own dense work per iteration at a given n, k
// (a diagonal operator, so the product costs nothing). Figures are printed, not asserted; the
// table in DEVELOPERS.md ("Block PCG") comes from here.
//   node tests/bench/blockcg.bench.mjs [pads=16] [pads=36] [row=2] [sphere=6] [vector=80000x64]   (pads: a square array, row: 1 × N; dense: the dense iterative solver instead of the compressed one)
import { loadavg } from "node:os";
import { sphereMesh, plateMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../../dist/src/mesh/model.js";
import { solveUnitPotentials } from "../../dist/src/extract/solve.js";
import { sharedPool, closeSharedPool, sharedFloat64 } from "../../dist/src/linalg/pool.js";
import { pcg } from "../../dist/src/linalg/cg.js";
import { blockPcg } from "../../dist/src/linalg/block-cg.js";

const args = process.argv.slice(2);
const pool = sharedPool();
const load = () => loadavg().map((x) => x.toFixed(2)).join(" ");
console.log(`load average ${load()} (figures on a shared machine scale with it)`);
const cpu = () => { const u = process.cpuUsage(); return (u.user + u.system) / 1e6; };

function padArray(side, cols = side) {
  const parts = [];
  for (let i = 0; i < side; i++)
    for (let j = 0; j < cols; j++)
      parts.push({ ...plateMesh({ size: [0.008, 0.008], divisions: 25, center: [0.01 * i, 0.01 * j, 0] }), names: [`pad${i}${j}`] });
  return concatMeshes(parts);
}

/** b_iᵀ x_j summed per conductor: the raw charge matrix, for agreement between the two solves. */
function charges(x, conductor, k) {
  const Cm = new Float64Array(k * k);
  for (let p = 0; p < conductor.length; p++) for (let j = 0; j < k; j++) Cm[conductor[p] * k + j] += x[p * k + j];
  return Cm;
}

const solver = args.includes("dense") ? "iterative" : "compressed";
async function compare(label, mesh, k) {
  console.log(`\n${label}: ${mesh.conductor.length} panels, k = ${k}, --solver ${solver}  load ${load()}`);
  let ref;
  for (const block of [false, true]) {
    const c0 = cpu(), t0 = performance.now();
    const sol = await solveUnitPotentials(mesh.positions, mesh.triangles, mesh.conductor, k, { method: "galerkin", solver, tolerance: 1e-4, pool, blockKrylov: block });
    const wall = (performance.now() - t0) / 1e3, mainCpu = cpu() - c0, s = sol.info;
    const Cm = charges(sol.x, mesh.conductor, k);
    let diff = 0, scale = 0;
    if (ref) for (let i = 0; i < k * k; i++) { diff = Math.max(diff, Math.abs(Cm[i] - ref[i])); scale = Math.max(scale, Math.abs(ref[i])); }
    ref ??= Cm;
    console.log(`  ${(block ? "block PCG" : "PCG").padEnd(10)} build ${s.assemblySeconds.toFixed(2)} s  solve ${s.solveSeconds.toFixed(2)} s (preconditioner ${s.preconditionerSeconds?.toFixed(2)} s)  it ${s.iterations}  res ${s.residual?.toExponential(2)}  wall ${wall.toFixed(2)} s  process CPU ${mainCpu.toFixed(2)} s${block && k > 1 ? `  max |ΔQ|/max|Q| ${(diff / scale).toExponential(1)}` : ""}  load ${loadavg()[0].toFixed(2)}`);
  }
}

/** The solvers' own work per iteration: A diagonal (product ≈ n·k), no preconditioner, fixed iteration count. */
async function vector(n, k, its) {
  console.log(`\nsolver work per iteration, n = ${n}, k = ${k}, ${its} iterations (diagonal A, M = I)  load ${load()}`);
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = 1 + (1e4 * i) / n;
  const apply = (X, Y, w) => { for (let i = 0; i < n; i++) { const a = d[i], o = i * w; for (let c = 0; c < w; c++) Y[o + c] = a * X[o + c]; } };
  const precondition = (R, Z) => { Z.set(R); };
  const B = sharedFloat64(n * k);
  let seed = 1;
  for (let i = 0; i < n * k; i++) { seed = (seed * 16807) % 2147483647; B[i] = seed / 2147483647 - 0.5; }
  for (const [name, solve, p] of [["PCG", pcg], ["block PCG", blockPcg], ["block, pool", blockPcg, pool]]) {
    const c0 = cpu(), t0 = performance.now();
    const r = await solve(apply, precondition, B, k, { tol: 1e-30, maxIter: its, pool: p });
    const wall = (performance.now() - t0) / 1e3;
    console.log(`  ${name.padEnd(11)} ${(1e3 * wall / r.iterations).toFixed(0)} ms per iteration (wall, incl. the diagonal product), CPU ${(cpu() - c0).toFixed(2)} s`);
  }
}

for (const a of args.length ? args : ["vector=80000x64", "pads=16", "sphere=6", "pads=36"]) {
  const [key, val] = a.split("=");
  if (key === "dense") continue;
  if (key === "pads") { const side = Math.round(Math.sqrt(Number(val))); await compare(`${side * side} pads`, padArray(side), side * side); }
  else if (key === "row") await compare(`row of ${val} pads`, padArray(1, Number(val)), Number(val));
  else if (key === "sphere") await compare(`sphere level ${val}`, sphereMesh({ radius: 1, level: Number(val) }), 1);
  else if (key === "vector") { const [n, k] = val.split("x").map(Number); await vector(n, k, 10); }
  else throw new Error(`unknown argument ${a}`);
}
await closeSharedPool();
