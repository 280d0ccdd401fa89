import type { Command } from "commander";
export function registerMesh(program: Command): void {
  void program; // placeholder while the command is being written
}
