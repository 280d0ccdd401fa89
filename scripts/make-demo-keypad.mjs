// Builds the demo keypad's keys-with-traces and guard-ring meshes (invented geometry) with the
// library's generator: each key and its trace are one net, so they go into one mesh file;
// the guard ring is one net made of seven strips (gaps at the bottom let the traces out).
// Run after `npm run build`: node scripts/make-demo-keypad.mjs
import { plateMesh } from "../dist/src/mesh/primitives/index.js";
import { concatMeshes } from "../dist/src/mesh/model.js";
import { writeMeshFile } from "../dist/src/io/write.js";

const mm = 1e-3;
const out = new URL("../meshes/demo/", import.meta.url).pathname;
const one = (parts, name) => {
  const m = concatMeshes(parts);
  return { ...m, conductor: new Uint32Array(m.triangles.length / 3), names: [name] };
};
const strip = (x0, x1, y0, y1, h) => plateMesh({ size: [(x1 - x0) * mm, (y1 - y0) * mm], panelSize: h * mm, center: [((x0 + x1) / 2) * mm, ((y0 + y1) / 2) * mm, 0] });

// Keys: 10 mm squares on a 14 mm pitch; traces 0.5 mm wide from each key's lower edge to y = −14 mm.
[-14, 0, 14].forEach((x, i) => {
  const key = plateMesh({ size: [10 * mm, 10 * mm], divisions: 12, grading: 3, center: [x * mm, 0, 0] });
  const trace = strip(x - 0.25, x + 0.25, -14, -5, 0.5);
  writeMeshFile(`${out}key${i + 1}.stl`, one([key, trace], `key${i + 1}`), "stl", "mm");
});
// Guard ring: 1 mm wide, 2 mm outside the keys; the bottom side is cut where the traces pass (0.75 mm clear).
const h = 0.5;
const ring = [
  strip(-22, 22, 7, 8, h), strip(-22, -21, -7, 7, h), strip(21, 22, -7, 7, h),
  strip(-22, -15, -8, -7, h), strip(-13, -1, -8, -7, h), strip(1, 13, -8, -7, h), strip(15, 22, -8, -7, h),
];
writeMeshFile(`${out}guard.stl`, one(ring, "guard"), "stl", "mm");
