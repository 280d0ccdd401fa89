/**
 * The mesh check: everything sigmesh can say about a conductor mesh before solving it.
 * Composes topology (closed, boundary, non-manifold, orientation), panel quality and
 * proximity between conductors into one report, all lengths in metres.
 */
import { type SurfaceMesh, triangleCount, vertexCount, conductorAreas } from "./model.js";
import { buildEdgeTable, conductorTopology, orientSurfaces, conductorOrientation, type ConductorOrientation, type OrientationResult, type EdgeTable } from "./topology.js";
import { conductorQuality, type MeshQuality } from "./quality.js";
import { conductorProximity, enclosedConductors, proximityTask, resolveOverlaps, conductorTriangles, type ProximityOptions, type ProximityFinding } from "./proximity.js";
import { selfOverlaps, withoutRepeats, type SelfOverlap } from "./self-overlap.js";
import { sharedPool, toShared } from "../linalg/pool.js";

export interface ConductorCheck {
  name: string;
  triangles: number;
  /** Square metres. */
  area: number;
  /** [minx, miny, minz, maxx, maxy, maxz], metres; null without triangles. */
  bbox: [number, number, number, number, number, number] | null;
  /** Every edge shared by exactly two of this conductor's triangles. Open sheets are legal. */
  closed: boolean;
  /** Connected pieces (triangles joined across two-triangle edges). */
  components: number;
  boundaryEdges: number;
  nonManifoldEdges: number;
  /** Two-triangle edges whose triangles wind the same way (as given). */
  inconsistentEdges: number;
  orientation: ConductorOrientation;
  /** Triangles whose winding `orientSurfaces` reverses. */
  flippedTriangles: number;
  /** Enclosed volume after orientation, cubic metres; null unless closed and orientable. */
  volume: number | null;
  /** Shortest and longest edge; metres. */
  edgeLength: { min: number; max: number };
  /** Worst radius ratio R/(2r) (1 = equilateral); null when a triangle is degenerate. */
  worstAspect: number | null;
  /** Centroid of the worst-shaped triangle; metres. */
  worstAspectAt: [number, number, number] | null;
  degenerateTriangles: number;
  /**
   * Where the conductor covers itself (repeated faces, coplanar overlaps; self-overlap.ts), or
   * null. Fails the check: the solve would see two panels carrying one charge.
   */
  selfOverlap: SelfOverlapCheck | null;
}

export interface SelfOverlapCheck {
  /** Triangles repeating another of the conductor (same three vertices, any order). */
  repeated: number;
  /** Pairs of distinct triangles overlapping with positive area in one plane. */
  overlapping: number;
  /** True when the overlap search stopped early: `overlapping` is a lower bound. */
  lowerBound: boolean;
  /** Centroid of the first triangle found; metres. */
  position: [number, number, number];
}

export type PairKind = "intersect" | "touch" | "inside" | "gap";

export interface PairCheck {
  kind: PairKind;
  /** intersect and touch fail the check; inside and gap are warnings. */
  severity: "error" | "warning";
  a: string;
  b: string;
  /** Smallest distance found, metres (0 for intersect, touch within tolerance, inside). */
  distance: number;
  /** Where; metres. */
  position: [number, number, number];
  /** Local panel size there (longer of the two triangles' longest edges), metres; null for inside. */
  panelSize: number | null;
}

export interface CheckReport {
  conductors: ConductorCheck[];
  pairs: PairCheck[];
  triangles: number;
  vertices: number;
  /** True when any pair is an error or a conductor covers itself (the check failed). */
  failed: boolean;
}

export interface CheckOptions extends ProximityOptions {}

/** Aspect ratio above which triangles are reported as thin (common practice for collocation BEM: ~10). */
export const THIN_ASPECT = 10;

/**
 * Check a mesh (metres). Also returns the oriented copy the checks were made on. Repeated faces
 * are reported, then left out of the other stages: they would only repeat the finding as
 * non-manifold edges, and ten million copies of one face would cost the stages seconds each.
 */
export function checkMeshOriented(mesh: SurfaceMesh, opts: CheckOptions = {}): { report: CheckReport; oriented: OrientationResult } {
  const overlaps = selfOverlaps(mesh);
  const unique = withoutRepeats(mesh).mesh;
  return assemble(unique, opts, conductorProximity(unique, opts), { overlaps });
}

/** The per-conductor checks, and the proximity findings (made on the mesh as given) resolved against the oriented mesh. */
function assemble(
  mesh: SurfaceMesh, opts: CheckOptions, findings: ProximityFinding[],
  done: { table?: EdgeTable; oriented?: OrientationResult; quality?: MeshQuality[]; overlaps?: SelfOverlap[] } = {},
): { report: CheckReport; oriented: OrientationResult } {
  const nc = mesh.names.length, nt = triangleCount(mesh);
  const table = done.table ?? buildEdgeTable(mesh);
  const topo = conductorTopology(mesh, table);
  const oriented = done.oriented ?? orientSurfaces(mesh, table);
  const orientation = conductorOrientation(oriented, nc);
  const quality = done.quality ?? conductorQuality(mesh);
  const areas = conductorAreas(mesh);
  const overlapOf = new Array<SelfOverlap | undefined>(nc);
  for (const f of done.overlaps ?? selfOverlaps(mesh)) overlapOf[f.conductor] = f;

  const count = new Uint32Array(nc), comps = new Uint32Array(nc), flipped = new Uint32Array(nc);
  const volume = new Float64Array(nc), volumeOk = new Uint8Array(nc).fill(1);
  for (let t = 0; t < nt; t++) count[mesh.conductor[t]]++;
  let repeated = 0;
  for (let c = 0; c < nc; c++) { const r = overlapOf[c]?.repeated ?? 0; count[c] += r; repeated += r; }
  for (const c of oriented.components) {
    comps[c.conductor]++;
    flipped[c.conductor] += c.flippedTriangles;
    if (Number.isFinite(c.signedVolume)) volume[c.conductor] += c.signedVolume; else volumeOk[c.conductor] = 0;
  }
  const boxes: Float64Array[] = [];
  for (let c = 0; c < nc; c++) boxes.push(new Float64Array([Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity]));
  const p = mesh.positions, tr = mesh.triangles;
  for (let t = 0; t < nt; t++) {
    const b = boxes[mesh.conductor[t]];
    for (let j = 0; j < 3; j++) {
      const v = 3 * tr[3 * t + j];
      for (let k = 0; k < 3; k++) { const x = p[v + k]; if (x < b[k]) b[k] = x; if (x > b[k + 3]) b[k + 3] = x; }
    }
  }

  const conductors: ConductorCheck[] = [];
  for (let c = 0; c < nc; c++) {
    const q = quality[c], b = boxes[c];
    let at: [number, number, number] | null = null;
    if (q.worstAspectTriangle >= 0) {
      const t = q.worstAspectTriangle;
      const i = 3 * tr[3 * t], j = 3 * tr[3 * t + 1], k = 3 * tr[3 * t + 2];
      at = [(p[i] + p[j] + p[k]) / 3, (p[i + 1] + p[j + 1] + p[k + 1]) / 3, (p[i + 2] + p[j + 2] + p[k + 2]) / 3];
    }
    conductors.push({
      name: mesh.names[c],
      triangles: count[c],
      area: areas[c],
      bbox: count[c] > 0 ? [b[0], b[1], b[2], b[3], b[4], b[5]] : null,
      closed: topo[c].closed,
      components: comps[c],
      boundaryEdges: topo[c].boundaryEdges,
      nonManifoldEdges: topo[c].nonManifoldEdges,
      inconsistentEdges: topo[c].inconsistentEdges,
      orientation: orientation[c],
      flippedTriangles: flipped[c],
      volume: count[c] > 0 && volumeOk[c] ? volume[c] : null,
      edgeLength: { min: q.minEdge, max: q.maxEdge },
      worstAspect: Number.isFinite(q.worstAspect) ? q.worstAspect : null,
      worstAspectAt: at,
      degenerateTriangles: q.degenerateTriangles,
      selfOverlap: selfOverlapCheck(overlapOf[c]),
    });
  }

  const pairs: PairCheck[] = [];
  const solid = conductors.map((c) => c.closed && (c.orientation === "outward" || c.orientation === "inward-flipped" || c.orientation === "repaired"));
  const groups = conductorTriangles(oriented.mesh);
  resolveOverlaps(oriented.mesh, findings, solid, groups, opts);
  for (const f of findings) {
    pairs.push({
      kind: f.kind, severity: f.kind === "gap" ? "warning" : "error",
      a: mesh.names[f.a], b: mesh.names[f.b], distance: f.distance, position: f.position, panelSize: f.panelSize,
    });
  }
  // A conductor inside another's material may meet no surface of it (or only touch it at its
  // rim, like a plate across a box); only an enclosure test sees it. It replaces a gap finding
  // for the same pair, not an intersection or a contact (those stay errors).
  for (const e of enclosedConductors(oriented.mesh, solid, boxes, groups)) {
    const a = mesh.names[Math.min(e.inner, e.outer)], b = mesh.names[Math.max(e.inner, e.outer)];
    const k = pairs.findIndex((x) => x.a === a && x.b === b);
    if (k >= 0 && (pairs[k].kind === "intersect" || pairs[k].kind === "touch")) continue;
    // A single closed surface may be a solid body or a zero-thickness shell around a cavity:
    // the boundary-element model is the same for both from outside, and a conductor in a
    // shell's cavity is a legal, common model (a shielded electrode). So this warns.
    const entry: PairCheck = { kind: "inside", severity: "warning", a: mesh.names[e.inner], b: mesh.names[e.outer], distance: 0, position: e.position, panelSize: null };
    if (k >= 0) pairs[k] = entry; else pairs.push(entry);
  }
  const rank: Record<PairKind, number> = { intersect: 3, inside: 2, touch: 1, gap: 0 };
  pairs.sort((x, y) => rank[y.kind] - rank[x.kind]);
  return {
    report: { conductors, pairs, triangles: nt + repeated, vertices: vertexCount(mesh), failed: pairs.some((x) => x.severity === "error") || conductors.some((c) => c.selfOverlap !== null) },
    oriented,
  };
}

function selfOverlapCheck(f: SelfOverlap | undefined): SelfOverlapCheck | null {
  return f ? { repeated: f.repeated, overlapping: f.overlapping, lowerBound: f.truncated, position: f.position } : null;
}

/** Check a mesh (metres): per-conductor topology and quality, and problems between conductors. */
export function checkMesh(mesh: SurfaceMesh, opts: CheckOptions = {}): CheckReport {
  return checkMeshOriented(mesh, opts).report;
}

/** Below this many triangles a worker costs more than it saves. */
export const PARALLEL_MIN_TRIANGLES = 100_000;

/**
 * `checkMesh` on two threads: the proximity search (the largest single stage) runs in a
 * worker from the shared pool while this thread builds the edge table, orients and
 * measures. Same report as `checkMesh`.
 */
export async function checkMeshParallel(given: SurfaceMesh, opts: CheckOptions = {}): Promise<CheckReport> {
  const pool = sharedPool();
  if (triangleCount(given) < PARALLEL_MIN_TRIANGLES || pool.size < 2 || given.names.length < 2) return checkMesh(given, opts);
  const mesh = withoutRepeats(given).mesh;
  // The message is posted synchronously, so the worker starts while this thread computes.
  const pending = pool.run(proximityTask, 1, [toShared(mesh.positions), mesh.triangles, mesh.conductor, mesh.names.length, { ...opts }])
    .then((f): ProximityFinding[] | undefined => f, () => undefined);
  const finish = assembleLater(mesh, opts, selfOverlaps(given));
  // A worker that cannot start (no compiled module, say) costs time, not the answer.
  const findings = (await pending) ?? conductorProximity(mesh, opts);
  return finish(findings).report;
}

/** Run the per-conductor stages now and return a function that finishes with the findings. */
function assembleLater(mesh: SurfaceMesh, opts: CheckOptions, overlaps: SelfOverlap[]): (findings: ProximityFinding[]) => { report: CheckReport; oriented: OrientationResult } {
  const table = buildEdgeTable(mesh);
  const oriented = orientSurfaces(mesh, table);
  const quality = conductorQuality(mesh);
  return (findings) => assemble(mesh, opts, findings, { table, oriented, quality, overlaps });
}
