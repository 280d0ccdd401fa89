// Builds the viewer page into one script and one stylesheet (dist/viewer/viewer.js, viewer.css)
// that src/report/html.ts inlines into every HTML report: no network, no server needed.
import { defineConfig } from "vite";
import { fileURLToPath } from "node:url";

const here = (p: string): string => fileURLToPath(new URL(p, import.meta.url));

export default defineConfig({
  root: here("."),
  publicDir: false,
  logLevel: "warn",
  build: {
    outDir: here("../dist/viewer"),
    emptyOutDir: true,
    target: "es2020",
    minify: true,
    sourcemap: false,
    cssCodeSplit: false,
    lib: {
      entry: here("src/main.ts"),
      formats: ["iife"],
      name: "sigmeshViewer",
      fileName: () => "viewer.js",
      cssFileName: "viewer",
    },
  },
});
