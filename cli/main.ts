#!/usr/bin/env node
/** sigmesh command-line entry: each command lives in its own file and only composes the library. */
import { Command, Help, type Option } from "commander";
import { setDebug, reportFailure } from "./common.js";
import { version } from "../src/version.js";
import { registerCheck } from "./check.js";
import { registerMesh } from "./mesh.js";
import { registerExtract } from "./extract.js";
import { registerDemo } from "./demo.js";
import { registerView } from "./view.js";
import { registerSweep } from "./sweep.js";


export function buildProgram(): Command {
  const program = new Command();
  program
    .name("sigmesh")
    .description("Boundary-element capacitance, charge and surface-field extraction for 3D conductors given as triangle meshes.")
    .version(version())
    .option("--debug", "show stack traces and internal detail on failure")
    // Set before the commands are added: commander copies it to each of them.
    .configureHelp({
      optionDescription(this: Help, option: Option): string {
        // A repeatable option's empty list ("(default: [])") tells the reader nothing, and a
        // description that already names its default must not get commander's second one.
        const own = option.description ?? "";
        const emptyList = Array.isArray(option.defaultValue) && option.defaultValue.length === 0;
        if (emptyList || /\(default\b/.test(own)) return own;
        return Help.prototype.optionDescription.call(this, option);
      },
    })
    .hook("preAction", (cmd) => setDebug(Boolean(cmd.opts().debug)))
    // Usage errors are bad input (exit 2); help and version asked for are success, but help
    // shown because no command was given is a usage error too (commander gives it exit code 1).
    .exitOverride((err) => {
      process.exit(err.exitCode === 0 ? 0 : 2);
    });
  registerCheck(program);
  registerMesh(program);
  registerExtract(program);
  registerDemo(program);
  registerView(program);
  registerSweep(program);
  // Usage errors are one line, like every other failure, pointing at the help of the command
  // that refused the line.
  const oneLineErrors = (cmd: Command, path: string): void => {
    cmd.configureOutput({
      outputError: (text, write) => {
        const first = text.trim().split("\n")[0].replace(/^error: /, "");
        write(`sigmesh: error: ${first} (see ${path} --help)\n`);
      },
    });
    for (const sub of cmd.commands) oneLineErrors(sub, `${path} ${sub.name()}`);
  };
  oneLineErrors(program, "sigmesh");
  return program;
}

// No command at all is a usage error like any other: one line pointing at the help (commander
// would print the whole help to stderr).
const program = buildProgram();
if (process.argv.slice(2).every((a) => a === "--debug")) {
  process.stderr.write(`sigmesh: error: no command given: one of ${program.commands.map((c) => c.name()).join(", ")} (see sigmesh --help)\n`);
  process.exit(2);
}
program
  .parseAsync(process.argv)
  .catch((err) => { process.exitCode = reportFailure(err); });
