/**
 * The probed potential and field of one request as CSV, lengths back in the user's unit.
 * Requests and their points: src/io/probe-spec.ts; the probing: src/extract/probe.ts.
 */
import type { ProbeResult } from "../extract/probe.js";
import { distanceAlong, type ProbeSpec } from "../io/probe-spec.js";
import { type LengthUnit, metresPer } from "../io/units.js";

/** Field magnitude |E| per point; V/m. */
export function fieldMagnitude(result: ProbeResult): Float64Array {
  const m = result.potential.length, e = new Float64Array(m);
  for (let i = 0; i < m; i++) e[i] = Math.hypot(result.field[3 * i], result.field[3 * i + 1], result.field[3 * i + 2]);
  return e;
}

function quoted(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function num(x: number): string {
  return Number.isFinite(x) ? String(x) : "";
}

/**
 * CSV (RFC 4180: CRLF records, quoted fields where needed) of one request's results:
 * probe name, point index, x, y, z in the user's `unit`, the distance along a line (lines)
 * or the grid indices i, j (grids), potential (V), Ex, Ey, Ez and |E| (V/m). `points` are the
 * metres from `probePoints`. `columns` forces the distance and grid-index columns on (left
 * empty where they do not apply), so that the tables of several requests of different kinds
 * share one header.
 */
export function probeCsv(spec: ProbeSpec, points: Float64Array, result: ProbeResult, unit: LengthUnit,
  columns?: { distance: boolean; grid: boolean }): string {
  const m = points.length / 3;
  if (result.potential.length !== m || result.field.length !== 3 * m) throw new RangeError(`probeCsv: ${m} points but ${result.potential.length} results`);
  const s = metresPer(unit), u = unit === "um" ? "µm" : unit;
  const withDistance = columns?.distance ?? spec.kind === "line", withGrid = columns?.grid ?? spec.kind === "grid";
  const header = ["probe", "index", `x (${u})`, `y (${u})`, `z (${u})`];
  if (withDistance) header.push(`distance (${u})`);
  if (withGrid) header.push("i", "j");
  header.push("potential (V)", "Ex (V/m)", "Ey (V/m)", "Ez (V/m)", "|E| (V/m)");
  const lines = [header.map(quoted).join(",")];
  const name = quoted(spec.name);
  const d = spec.kind === "line" ? distanceAlong(points) : undefined;
  const e = fieldMagnitude(result);
  const nu = spec.kind === "grid" ? spec.counts[0] : 1;
  for (let i = 0; i < m; i++) {
    const row = [name, String(i), num(points[3 * i] / s), num(points[3 * i + 1] / s), num(points[3 * i + 2] / s)];
    if (withDistance) row.push(d ? num(d[i] / s) : "");
    if (withGrid) row.push(...(spec.kind === "grid" ? [String(i % nu), String(Math.floor(i / nu))] : ["", ""]));
    row.push(num(result.potential[i]), num(result.field[3 * i]), num(result.field[3 * i + 1]), num(result.field[3 * i + 2]), num(e[i]));
    lines.push(row.join(","));
  }
  return lines.join("\r\n") + "\r\n";
}
