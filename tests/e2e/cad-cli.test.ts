// CAD files on the command line: the unit the file declares is the one shown, --unit still wins for the report.
import { describe, it, expect } from "vitest";
import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";

const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));
const cad = (n: string) => fileURLToPath(new URL(`../fixtures/cad/${n}`, import.meta.url));
const run = (args: string[]) => spawnSync(process.execPath, [cli, ...args], { encoding: "utf8" });

describe("sigmesh check on CAD files", () => {
  it("a STEP file in inches: shown in inches as declared; --unit mm shows millimetres of the same cube", () => {
    const a = run(["check", cad("cube-in.step")]);
    expect(a.status).toBe(0);
    expect(a.stdout).toMatch(/^unit: in \(declared by the files\)$/m);
    expect(a.stderr).toMatch(/length unit inch declared by the file and used/);
    const b = run(["check", cad("cube-in.step"), "--unit", "mm"]);
    expect(b.stdout).toMatch(/^unit: mm \(given with --unit\)$/m);
    // 1 m cube: 6e6 mm² either way.
    expect(b.stdout).toMatch(/Cube\s+12\s+6\.000e\+6\s+0\.000\.\.1000/);
  });
});
