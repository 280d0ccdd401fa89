/**
 * Probe requests: where in space the user wants the potential and field. Points, straight
 * lines (evenly spaced points from one end to the other, both ends included) and planar
 * grids (origin plus two edge vectors, evenly spaced both ways, edges included). Lengths
 * stay in the user's unit until `probePoints` turns them into metres. The CSV of the probed
 * values is src/report/probe-csv.ts.
 *
 * Command line (one request per option value; an optional `NAME=` in front names it):
 *   point:x,y,z[:x,y,z...]              one or more points
 *   line:x0,y0,z0:x1,y1,z1:n            n points from (x0,y0,z0) to (x1,y1,z1)
 *   grid:ox,oy,oz:ux,uy,uz:vx,vy,vz:nu,nv   nu × nv points over origin + s·u + t·v, s,t ∈ [0,1]
 * Scene (`"probes": [...]`):
 *   { "name": "tip", "point": [x, y, z] }  or  { "points": [[x, y, z], ...] }
 *   { "name": "gap", "line": { "from": [..], "to": [..], "points": 50 } }
 *   { "name": "above pad", "grid": { "origin": [..], "u": [..], "v": [..], "points": [20, 10] } }
 */
import { InputError } from "../errors.js";
import { isObject } from "./json-value.js";

export type Vec3 = [number, number, number];

export type ProbeSpec =
  | { kind: "points"; name: string; points: Vec3[] }
  | { kind: "line"; name: string; from: Vec3; to: Vec3; count: number }
  | { kind: "grid"; name: string; origin: Vec3; u: Vec3; v: Vec3; counts: [number, number] };

/** Most points one request may ask for: each costs a pass over all panels. */
export const MAX_PROBE_POINTS = 1_000_000;

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const NAME = /^[A-Za-z_][A-Za-z0-9_.-]*$/;

export interface SpecContext {
  /** File in errors (a scene). */
  file?: string;
}

function numberOf(s: string, what: string, fail: (f: string) => never): number {
  const t = s.trim();
  if (!DECIMAL.test(t)) fail(`${what}: "${t}" is not a number`);
  const x = Number(t);
  if (!Number.isFinite(x)) fail(`${what}: "${t}" is out of range`);
  return x;
}

function triple(s: string, what: string, fail: (f: string) => never): Vec3 {
  const parts = s.split(",");
  if (parts.length !== 3) fail(`${what} takes 3 coordinates x,y,z, got ${parts.length} ("${s}")`);
  return parts.map((p, i) => numberOf(p, `${what} ${"xyz"[i]}`, fail)) as Vec3;
}

function countOf(x: number, what: string, fail: (f: string) => never): number {
  if (!Number.isInteger(x) || x < 2) fail(`${what} must be a whole number of at least 2, got ${x}`);
  if (x > MAX_PROBE_POINTS) fail(`${what} is too large (${x}; at most ${MAX_PROBE_POINTS} points)`);
  return x;
}

function checkGeometry(spec: ProbeSpec, fail: (f: string) => never): ProbeSpec {
  if (spec.kind === "line") {
    if (spec.from.every((x, i) => x === spec.to[i])) fail("the line's two ends are the same point");
  } else if (spec.kind === "grid") {
    const [nu, nv] = spec.counts;
    if (nu * nv > MAX_PROBE_POINTS) fail(`the grid has ${nu * nv} points, more than ${MAX_PROBE_POINTS}`);
    const { u, v } = spec;
    const cx = u[1] * v[2] - u[2] * v[1], cy = u[2] * v[0] - u[0] * v[2], cz = u[0] * v[1] - u[1] * v[0];
    const lu = Math.hypot(...u), lv = Math.hypot(...v);
    if (lu === 0 || lv === 0) fail(`the grid's ${lu === 0 ? "first" : "second"} edge vector is zero`);
    // Parallel edges (to 1e-9 in sin of the angle) would stack the points on one line.
    if (Math.hypot(cx, cy, cz) <= 1e-9 * lu * lv) fail("the grid's two edge vectors are parallel");
  } else if (spec.points.length > MAX_PROBE_POINTS) fail(`${spec.points.length} points, more than ${MAX_PROBE_POINTS}`);
  return spec;
}

/**
 * Parse one command-line request (see the module comment). `option` names the option in
 * errors (default `--probe`); `index` numbers unnamed requests ("probe1", "probe2", …).
 */
export function parseProbeOption(text: string, option = "--probe", index = 1): ProbeSpec {
  const fail = (fault: string): never => { throw new InputError(`${option} "${text}": ${fault}`); };
  let body = text.trim();
  let name = `probe${index}`;
  const eq = body.indexOf("=");
  if (eq >= 0) {
    name = body.slice(0, eq).trim();
    body = body.slice(eq + 1).trim();
    if (!NAME.test(name)) fail(`probe name "${name}" must start with a letter or underscore and hold only letters, digits, _ . -`);
  }
  const parts = body.split(":");
  const kind = parts[0].trim().toLowerCase();
  const rest = parts.slice(1);
  const usage: Record<string, string> = {
    point: "point:x,y,z (more points as :x,y,z)",
    line: "line:x0,y0,z0:x1,y1,z1:n",
    grid: "grid:ox,oy,oz:ux,uy,uz:vx,vy,vz:nu,nv",
  };
  switch (kind) {
    case "point": case "points": {
      if (rest.length === 0) fail(`expected ${usage.point}`);
      return checkGeometry({ kind: "points", name, points: rest.map((p, i) => triple(p, rest.length === 1 ? "point" : `point ${i + 1}`, fail)) }, fail);
    }
    case "line": {
      if (rest.length !== 3) fail(`expected ${usage.line} (${rest.length} fields after "line:", need 3)`);
      const from = triple(rest[0], "start", fail), to = triple(rest[1], "end", fail);
      const count = countOf(numberOf(rest[2], "point count", fail), "point count", fail);
      return checkGeometry({ kind: "line", name, from, to, count }, fail);
    }
    case "grid": {
      if (rest.length !== 4) fail(`expected ${usage.grid} (${rest.length} fields after "grid:", need 4)`);
      const origin = triple(rest[0], "origin", fail), u = triple(rest[1], "first edge", fail), v = triple(rest[2], "second edge", fail);
      const c = rest[3].split(",");
      if (c.length !== 2) fail(`point counts take 2 numbers nu,nv, got ${c.length} ("${rest[3]}")`);
      const nu = countOf(numberOf(c[0], "count along the first edge", fail), "count along the first edge", fail);
      const nv = countOf(numberOf(c[1], "count along the second edge", fail), "count along the second edge", fail);
      return checkGeometry({ kind: "grid", name, origin, u, v, counts: [nu, nv] }, fail);
    }
    default:
      return fail(`unknown probe kind "${parts[0]}" (use ${Object.values(usage).join(", or ")})`);
  }
}

/**
 * Parse a scene's `"probes"` value (an array of request objects). Errors name the file and
 * the key path (`probes[1].line.points: expected a whole number of at least 2`).
 */
export function parseSceneProbes(value: unknown, ctx: SpecContext = {}, key = "probes"): ProbeSpec[] {
  const failAt = (path: string) => (fault: string): never => { throw new InputError(`${path}: ${fault}`, ctx.file); };
  if (!Array.isArray(value)) failAt(key)("expected an array of probe objects");
  const names = new Set<string>();
  return (value as unknown[]).map((entry, i) => {
    const path = `${key}[${i}]`;
    const fail = failAt(path);
    if (!isObject(entry)) fail("expected an object with \"point\", \"points\", \"line\" or \"grid\"");
    const o = entry as Record<string, unknown>;
    const kinds = ["point", "points", "line", "grid"].filter((k) => o[k] !== undefined);
    for (const k of Object.keys(o)) if (!["name", "description", "point", "points", "line", "grid"].includes(k)) fail(`unknown key "${k}" (expected name, point, points, line or grid)`);
    if (kinds.length !== 1) fail(kinds.length === 0 ? "needs one of \"point\", \"points\", \"line\" or \"grid\"" : `give only one of ${kinds.map((k) => `"${k}"`).join(" and ")}`);
    let name = `probe${i + 1}`;
    if (o.name !== undefined) {
      if (typeof o.name !== "string" || o.name.trim() === "") failAt(`${path}.name`)("expected a non-empty string");
      name = (o.name as string).trim();
    }
    if (names.has(name)) failAt(`${path}.name`)(`"${name}" is used by an earlier probe`);
    names.add(name);
    const vec = (v: unknown, p: string): Vec3 => {
      if (!Array.isArray(v) || v.length !== 3 || !v.every((x) => typeof x === "number" && Number.isFinite(x))) failAt(p)("expected [x, y, z], three numbers");
      return [...(v as number[])] as Vec3;
    };
    const count = (v: unknown, p: string): number => {
      if (typeof v !== "number") failAt(p)("expected a whole number of at least 2");
      return countOf(v as number, "the point count", failAt(p));
    };
    const kind = kinds[0];
    let spec: ProbeSpec;
    if (kind === "point") spec = { kind: "points", name, points: [vec(o.point, `${path}.point`)] };
    else if (kind === "points") {
      if (!Array.isArray(o.points) || o.points.length === 0) failAt(`${path}.points`)("expected a non-empty array of [x, y, z]");
      spec = { kind: "points", name, points: (o.points as unknown[]).map((p, j) => vec(p, `${path}.points[${j}]`)) };
    } else if (kind === "line") {
      const lp = `${path}.line`;
      if (!isObject(o.line)) failAt(lp)("expected { \"from\": [x, y, z], \"to\": [x, y, z], \"points\": n }");
      const l = o.line as Record<string, unknown>;
      for (const k of Object.keys(l)) if (!["from", "to", "points"].includes(k)) failAt(`${lp}.${k}`)("unknown key (expected from, to, points)");
      spec = { kind: "line", name, from: vec(l.from, `${lp}.from`), to: vec(l.to, `${lp}.to`), count: count(l.points, `${lp}.points`) };
    } else {
      const gp = `${path}.grid`;
      if (!isObject(o.grid)) failAt(gp)("expected { \"origin\": [x, y, z], \"u\": [..], \"v\": [..], \"points\": [nu, nv] }");
      const g = o.grid as Record<string, unknown>;
      for (const k of Object.keys(g)) if (!["origin", "u", "v", "points"].includes(k)) failAt(`${gp}.${k}`)("unknown key (expected origin, u, v, points)");
      if (!Array.isArray(g.points) || g.points.length !== 2) failAt(`${gp}.points`)("expected [nu, nv], two whole numbers of at least 2");
      const pts = g.points as unknown[];
      spec = { kind: "grid", name, origin: vec(g.origin, `${gp}.origin`), u: vec(g.u, `${gp}.u`), v: vec(g.v, `${gp}.v`),
        counts: [count(pts[0], `${gp}.points[0]`), count(pts[1], `${gp}.points[1]`)] };
    }
    return checkGeometry(spec, fail);
  });
}

/** Number of points a request yields. */
export function probePointCount(spec: ProbeSpec): number {
  return spec.kind === "points" ? spec.points.length : spec.kind === "line" ? spec.count : spec.counts[0] * spec.counts[1];
}

/**
 * The request's points in metres (3 per point). Lines run from `from` to `to`; grids vary
 * fastest along u: point (i, j) is at index j·nu + i.
 */
export function probePoints(spec: ProbeSpec, metresPerUnit: number): Float64Array {
  const s = metresPerUnit;
  const out = new Float64Array(3 * probePointCount(spec));
  if (spec.kind === "points") {
    spec.points.forEach((p, i) => { out[3 * i] = p[0] * s; out[3 * i + 1] = p[1] * s; out[3 * i + 2] = p[2] * s; });
  } else if (spec.kind === "line") {
    const n = spec.count;
    for (let i = 0; i < n; i++) {
      const t = i / (n - 1);
      // Interpolate as (1-t)·a + t·b so that both ends are exact.
      for (let c = 0; c < 3; c++) out[3 * i + c] = ((1 - t) * spec.from[c] + t * spec.to[c]) * s;
    }
  } else {
    const [nu, nv] = spec.counts;
    for (let j = 0; j < nv; j++) {
      const tv = j / (nv - 1);
      for (let i = 0; i < nu; i++) {
        const tu = i / (nu - 1), o = 3 * (j * nu + i);
        for (let c = 0; c < 3; c++) out[o + c] = (spec.origin[c] + tu * spec.u[c] + tv * spec.v[c]) * s;
      }
    }
  }
  return out;
}

/** Distance of each point from the line's start; metres (3 per point in, 1 per point out). */
export function distanceAlong(points: Float64Array): Float64Array {
  const m = points.length / 3, d = new Float64Array(m);
  for (let i = 0; i < m; i++) d[i] = Math.hypot(points[3 * i] - points[0], points[3 * i + 1] - points[1], points[3 * i + 2] - points[2]);
  return d;
}
