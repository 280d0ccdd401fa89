// From CAD to answer, against an independent reference: the filleted electrode over a plate
// (tests/fixtures/filleted-electrode/) given as STEP, as a coarse CAD-style STL and as a fine
// Gmsh mesh, solved with default settings and with refine 1, against the FEM reference computed
// with Gmsh 4.8.4 + GetDP 3.2 (tests/reference/fem/filleted-electrode.md: C11 = 0.96906 ± 0.00048 pF,
// C12 = −0.80863 ± 0.00072 pF). Targets of the issue: the CAD-style STL within 1 % at default
// settings, within 0.5 % and inside its own estimate with refine 1; the three forms agree within
// their estimates. Figures only; no pass/fail (tests/reference/filleted-electrode.test.ts checks
// the default-settings targets in npm test).
import { fileURLToPath } from "node:url";
import { loadavg } from "node:os";
import { loadScene } from "../../dist/src/io/inputs.js";
import { extract } from "../../dist/src/extract/extract.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";

const FEM = { C11: 0.96906e-12, C12: -0.80863e-12, u11: 0.00048e-12, u12: 0.00072e-12 };
const file = (n) => fileURLToPath(new URL(`../fixtures/filleted-electrode/${n}`, import.meta.url));
const cases = [
  ["CAD-style STL", "filleted-electrode-cad.stl", 0],
  ["CAD-style STL", "filleted-electrode-cad.stl", 1],
  ["STEP", "filleted-electrode.step", 0],
  ["STEP", "filleted-electrode.step", 1],
  ["fine Gmsh MSH", "filleted-electrode.msh", 0],
  ["fine Gmsh MSH", "filleted-electrode.msh", 1],
];
const pct = (x) => `${(100 * x).toFixed(3)} %`;
console.log(`load average ${loadavg().map((x) => x.toFixed(1)).join(" ")}`);
console.log("input           refine  panels   time    C11 (pF)    vs FEM     estimate   C12 (pF)     vs FEM     estimate");
const refined = [];
for (const [kind, name, refine] of cases) {
  const t0 = performance.now();
  const r = await extract(loadScene([file(name)]), { refine });
  const s = (performance.now() - t0) / 1e3;
  const [c11, c12] = [r.maxwell[0], r.maxwell[1]];
  const e = r.accuracy?.richardson.errorEstimate;
  console.log(`${kind.padEnd(15)} ${String(refine).padStart(6)} ${String(r.solver.panels).padStart(7)} ${s.toFixed(1).padStart(6)} s ${(c11 / 1e-12).toFixed(6).padStart(10)} ${pct(c11 / FEM.C11 - 1).padStart(10)} ${(e ? pct(e[0] / Math.abs(c11)) : "—").padStart(10)} ${(c12 / 1e-12).toFixed(6).padStart(11)} ${pct(c12 / FEM.C12 - 1).padStart(10)} ${(e ? pct(e[1] / Math.abs(c12)) : "—").padStart(10)}`);
  if (refine > 0) refined.push({ kind, c11, c12, e11: e[0], e12: e[1] });
}
console.log("\nrefine 1: the forms against each other, |difference| against the sum of their estimates");
for (let i = 0; i < refined.length; i++) for (let j = i + 1; j < refined.length; j++) {
  const a = refined[i], b = refined[j];
  console.log(`  ${a.kind} vs ${b.kind}: C11 ${pct(Math.abs(a.c11 - b.c11) / Math.abs(a.c11))} (allowed ${pct((a.e11 + b.e11) / Math.abs(a.c11))}), C12 ${pct(Math.abs(a.c12 - b.c12) / Math.abs(a.c12))} (allowed ${pct((a.e12 + b.e12) / Math.abs(a.c12))})`);
}
await closeSharedPool();
