import { defineConfig } from "vitest/config";

export default defineConfig({
  test: {
    include: ["tests/**/*.test.ts"],
    exclude: ["tests/bench/**", "node_modules/**", "dist/**"],
    // Workers load dist/: rebuild it first when the TypeScript is newer.
    globalSetup: ["tests/setup/build.ts"],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: "forks",
    maxWorkers: 2,
  },
});
