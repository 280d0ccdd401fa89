#!/usr/bin/env node
// Compare two sigmesh JSON reports (extract --json, with or without --json-panels) number by
// number, for refactors that must not change results: prints the largest relative difference
// of every numeric field (timings, memory and dates left out) and exits 1 when any exceeds the
// tolerance (default 1e-12) or the structure differs. Base64 panel arrays must be identical.
//   node scripts/compare-reports.mjs before.json after.json [tolerance]
import { readFileSync } from "node:fs";
import { basename } from "node:path";

const [a, b, tolText] = process.argv.slice(2);
if (!a || !b) { console.error("usage: compare-reports.mjs before.json after.json [tolerance]"); process.exit(2); }
const tol = tolText === undefined ? 1e-12 : Number(tolText);
const IGNORED = new Set(["created", "sigmesh", "seconds", "assemblySeconds", "solveSeconds", "entriesPerSecond", "factorGflops", "peakMemory", "estimatedBytes"]);
const left = JSON.parse(readFileSync(a, "utf8")), right = JSON.parse(readFileSync(b, "utf8"));
let worst = 0, worstAt = "", faults = [];

function walk(x, y, path) {
  const key = path.split(".").pop();
  if (IGNORED.has(key)) return;
  if (typeof x === "number" && typeof y === "number") {
    const scale = Math.max(Math.abs(x), Math.abs(y));
    const d = scale === 0 ? 0 : Math.abs(x - y) / scale;
    if (d > worst) { worst = d; worstAt = path; }
    return;
  }
  if (Array.isArray(x) && Array.isArray(y)) {
    if (x.length !== y.length) { faults.push(`${path}: length ${x.length} against ${y.length}`); return; }
    x.forEach((v, i) => walk(v, y[i], `${path}[${i}]`));
    return;
  }
  if (x && y && typeof x === "object" && typeof y === "object") {
    for (const k of new Set([...Object.keys(x), ...Object.keys(y)])) {
      if (IGNORED.has(k)) continue;
      if (!(k in x) || !(k in y)) { faults.push(`${path}.${k}: only in ${k in x ? "the first" : "the second"}`); continue; }
      walk(x[k], y[k], `${path}.${k}`);
    }
    return;
  }
  // Input paths may differ by the folder the run was made in.
  if (typeof x === "string" && typeof y === "string" && /\.input\.(files\[\d+\]|scene)$/.test(path) && basename(x) === basename(y)) return;
  if (x !== y) faults.push(`${path}: ${JSON.stringify(x)?.slice(0, 80)} against ${JSON.stringify(y)?.slice(0, 80)}`);
}

walk(left, right, "$");
for (const f of faults.slice(0, 20)) console.log(`differs: ${f}`);
console.log(`largest relative difference ${worst.toExponential(2)}${worstAt ? ` at ${worstAt}` : ""}; ${faults.length} structural or text difference(s)`);
process.exit(worst > tol || faults.length > 0 ? 1 : 0);
