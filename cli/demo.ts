/**
 * `sigmesh demo`: the main job on the bundled, invented demo scenes in meshes/demo,
 * through exactly the code path of `sigmesh extract`.
 */
import type { Command } from "commander";
import { fileURLToPath } from "node:url";
import { join } from "node:path";
import { existsSync } from "node:fs";
import { action } from "./common.js";
import { runExtract } from "./extract.js";
import { displayText } from "../src/io/display-text.js";

const DEMO_DIR = fileURLToPath(new URL("../../meshes/demo/", import.meta.url));

export const DEMO_SCENES = [
  // Both scenes get the Richardson error estimate (one refinement; the keypad's refined model
  // of ~15k panels runs on the compressed solver with its dielectric board).
  { scene: "keypad.json", what: "three-key touch pad with traces and a guard ring on an FR-4 board over a ground pour, fingertip over the middle key", probes: ["above-key2=line:0,0,0.1:0,0,2.9:30"], refine: 1 },
  { scene: "hv-electrode.json", what: "30 kV ball electrode over a grounded plate", probes: ["gap=line:0,0,14.9:0,0,0.1:40"], refine: 1 },
];

export function registerDemo(program: Command): void {
  program
    .command("demo")
    .description("extract the bundled demo scenes (meshes/demo) and write their reports")
    .option("--out <dir>", "folder for the reports", "sigmesh-demo")
    .option("--refine <K>", "uniform refinements for the error estimate (default 1)")
    .action(action(async (opts: { out: string; refine?: string }) => {
      for (const d of DEMO_SCENES) {
        const scene = join(DEMO_DIR, d.scene);
        if (!existsSync(scene)) throw new Error(`demo scene ${scene} is missing from the installation`);
        process.stdout.write(`\n=== demo: ${d.what}\n`);
        const stem = join(opts.out, d.scene.replace(/\.json$/, ""));
        const refine = opts.refine ?? String(d.refine);
        await runExtract([scene], {
          potential: [], method: "galerkin", solver: "auto", refine, tol: "1e-4",
          json: `${stem}.report.json`, html: `${stem}.html`, spice: `${stem}.cir`, markdown: `${stem}.md`, csv: `${stem}.csv`,
          probe: d.probes, probeCsv: `${stem}.probes.csv`,
          convergenceSvg: Number(refine) > 0 ? `${stem}.convergence.svg` : undefined,
        });
        // extract lists every file it wrote; point at the one to open.
        process.stdout.write(displayText(`open ${stem}.html in a browser for the 3D view of the charge and field`) + "\n");
      }
    }));
}
