// Refinement to a requested accuracy (--accuracy R, src/extract/adaptive.ts) beside uniform
// refinement (--refine K), on cases with a closed form or a published value: the true error of the
// reported C, its estimate, the panels of the finest mesh and the time. Figures only; the 1e-3
// checks are in tests/extract/adaptive.test.ts.
// References: sphere 4πε0R; unit cube 0.6606782·4πε0 (Hwang & Mascagni, J. Appl. Phys. 95, 2004);
// square plate 0.3667874·4πε0 (Read, J. Comput. Phys. 133, 1997; value from memory); thin disk
// 8ε0R (Jackson §3.12); sphere over a grounded plane: Kelvin's images (tests/reference/kelvin.ts).
// Usage: node tests/bench/adaptive.bench.mjs [case ...]   (cases: sphere cube plate disk sphere-plane)
import { loadavg, cpus } from "node:os";
import { extractMesh, sphereMesh, boxMesh, plateMesh, diskMesh } from "../../dist/src/index.js";
import { closeSharedPool } from "../../dist/src/linalg/pool.js";

const E0 = 8.8541878128e-12, K4 = 4 * Math.PI * E0;
// Kelvin's image series for a sphere (radius a, centre height d) over a grounded plane (as tests/reference/kelvin.ts).
function spherePlaneC(a, d) {
  let q = K4 * a, z = d, total = q;
  for (let n = 0; n < 10000; n++) {
    const dist = z + d; // image of the charge at height z is at −z; its image in the sphere:
    const qi = -q * a / dist, zi = d - a * a / dist;
    const qs = -qi; // the mirror of that image below the plane balances the plane
    q = qs; z = zi; total += q;
    if (Math.abs(q) < 1e-17 * Math.abs(total)) break;
  }
  return total;
}
const cases = {
  sphere: { make: () => sphereMesh({ radius: 1, level: 1 }), ref: K4, Rs: [1e-3, 1e-4], uniform: [1, 2, 3] },
  cube: { make: () => boxMesh({ size: [1, 1, 1], divisions: 6 }), ref: K4 * 0.6606782, Rs: [1e-3, 1e-4, 1e-5], uniform: [1, 2] },
  plate: { make: () => plateMesh({ size: [1, 1], divisions: 8 }), ref: K4 * 0.3667874, Rs: [1e-3, 1e-4], uniform: [1, 2, 3] },
  disk: { make: () => diskMesh({ radius: 1, divisions: 6 }), ref: 8 * E0, Rs: [1e-3, 1e-4], uniform: [1, 2] },
  "sphere-plane": { make: () => sphereMesh({ radius: 1e-3, level: 2, center: [0, 0, 1.5e-3] }), ref: spherePlaneC(1e-3, 1.5e-3), Rs: [1e-3, 1e-4], uniform: [1, 2],
    opts: { groundPlane: { axis: "z", offset: 0 } } },
};
const which = process.argv.slice(2);
const c = cpus();
console.log(`machine: ${c.length} x ${c[0]?.model ?? "CPU"}; load average ${loadavg().map((x) => x.toFixed(1)).join(" ")}`);
console.log("case          mode         R        panels   steps  true error  estimate   est/err   s");
const row = (name, mode, R, r, ref, s) => {
  const err = (r.maxwell[0] - ref) / ref;
  const est = r.accuracy ? r.accuracy.richardson.errorEstimate[0] / Math.abs(r.maxwell[0]) : NaN;
  const panels = r.accuracy ? r.accuracy.levels.at(-1).panels : r.panels.n;
  const steps = r.accuracy ? r.accuracy.levels.length : 1;
  console.log(`${name.padEnd(13)} ${mode.padEnd(12)} ${R.padEnd(8)} ${String(panels).padStart(7)} ${String(steps).padStart(6)}  ${err.toExponential(2).padStart(10)} ${est.toExponential(2).padStart(9)} ${(est / Math.abs(err)).toFixed(1).padStart(8)} ${s.toFixed(1).padStart(6)}`);
};
for (const [name, k] of Object.entries(cases)) {
  if (which.length && !which.includes(name)) continue;
  for (const refine of k.uniform) {
    const t = performance.now();
    const r = await extractMesh(k.make(), { ...k.opts, refine });
    row(name, `uniform ${refine}`, "-", r, k.ref, (performance.now() - t) / 1e3);
  }
  for (const R of k.Rs) {
    const t = performance.now();
    // At most 60,000 panels a run, so that the bench ends in minutes; a row not reached says so.
    const r = await extractMesh(k.make(), { ...k.opts, accuracy: R, maxPanels: 60000 });
    row(name, "adaptive", String(R), r, k.ref, (performance.now() - t) / 1e3);
    if (!r.accuracy?.adaptive?.reached) console.log(`  (not reached: ${r.accuracy?.adaptive?.stop})`);
  }
}
await closeSharedPool();
