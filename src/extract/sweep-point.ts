/**
 * The child process of a sweep run with `processes` > 0: one point, through the library's own
 * pipeline (`loadScene`, then `extract`), never through the command line.
 *
 *   node sweep-point.js <scene.json> '<settings as JSON>'
 *
 * Standard output receives one JSON object: `{ "names", "maxwell", "mutual", "warnings" }` (F,
 * row-major; the extraction's warnings as text) on success (exit 0), or `{ "inputError": { "fault", "file", "place" } }` for bad input (exit 2).
 * Any other failure is an internal error: its message on standard error, exit 1.
 */
import { loadScene } from "../io/inputs.js";
import { InputError } from "../errors.js";
import { extract, extractionWarnings, type ExtractSettings } from "./extract.js";

/** The settings a sweep passes to each point (plain JSON). */
export type PointSettings = Pick<ExtractSettings, "method" | "solver" | "tolerance" | "refine" | "accuracy" | "maxPanels">;

async function main(argv: string[]): Promise<number> {
  const [scene, settingsText] = argv;
  try {
    const settings = JSON.parse(settingsText ?? "{}") as PointSettings;
    const result = await extract(loadScene(scene), settings);
    process.stdout.write(JSON.stringify({ names: result.names, maxwell: Array.from(result.maxwell), mutual: Array.from(result.mutual), warnings: extractionWarnings(result) }));
    return 0;
  } catch (err) {
    if (err instanceof InputError) {
      process.stdout.write(JSON.stringify({ inputError: { fault: err.fault, file: err.file ?? null, place: err.place ?? null } }));
      return 2;
    }
    process.stderr.write(`${err instanceof Error ? err.stack ?? err.message : String(err)}\n`);
    return 1;
  }
}

process.exitCode = await main(process.argv.slice(2));
