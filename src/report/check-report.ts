/**
 * The JSON report of a mesh check (`sigmesh check --json`).
 *
 * JSON report (`--json <path|->`, written atomically; every quantity in SI units:
 * lengths m, areas m², volumes m³; numbers that are undefined are null):
 *   tool            "sigmesh"
 *   command         "check"
 *   version         sigmesh version
 *   files           input files, as given
 *   inputUnit       unit the files were read in ("mm", ...); unitAssumed: true when it was the default
 *   ok              true when no pair is an error and no conductor covers itself
 *   triangles, vertices        totals after welding and dropping degenerate triangles
 *   welded          vertices merged by welding (null for a scene: not kept); dropped: degenerate triangles removed on loading
 *   warnings        [{ file, message }] from loading
 *   conductors      one entry per conductor:
 *     name, triangles, area (m²),
 *     bbox          [minx, miny, minz, maxx, maxy, maxz] (m)
 *     closed        every edge shared by exactly two of its triangles (open sheets are legal)
 *     components    connected pieces
 *     boundaryEdges, nonManifoldEdges, inconsistentEdges (windings disagreeing across an edge, as given)
 *     orientation   "outward" | "inward-flipped" (was inward; reversed) | "repaired" (some triangles reversed)
 *                   | "open" | "inconsistent" (cannot be made consistent) | "non-manifold" | "empty"
 *     flippedTriangles  windings the orientation step reverses
 *     volume        enclosed volume (m³) after orientation, null unless closed and orientable
 *     edgeLength    { min, max } (m)
 *     worstAspect   largest radius ratio R/(2r), 1 = equilateral; null if a triangle is degenerate
 *     worstAspectAt centroid of that triangle (m)
 *     degenerateTriangles
 *     selfOverlap   null, or where the conductor covers itself (an error): { repeated (triangles
 *                   repeating another, same three corners), overlapping (pairs overlapping in one
 *                   plane), lowerBound (the search stopped early), position (first one, m) }
 *   pairs           findings between conductors, worst first:
 *     kind          "intersect" | "touch" (errors) | "inside" (warning: inside the closed surface of b, taken as a shell) | "gap" (warning: narrower than the local panel size)
 *     severity      "error" | "warning"
 *     a, b          conductor names (for inside: a lies inside b)
 *     distance      smallest distance found (m); position: where (m)
 *     panelSize     local panel size there (m), null for inside
 *   remesh          null, or what extract would change by remeshing CAD-style flat faces of the mesh
 *                   files (src/mesh/remesh.ts; not with --keep-mesh): { patches (flat patches remeshed),
 *                   neighbours (planar regions beside them triangulated anew to stay conforming),
 *                   panelsBefore, panelsAfter (in those regions), worstAspectBefore, worstAspectAfter
 *                   (radius ratio R/(2r) there), trianglesBefore, trianglesAfter (whole mesh) }
 *   scene           only when the input was a scene file:
 *     file          the scene file, as given
 *     dielectrics   one entry per dielectric body: name, permittivity (relative), triangles,
 *                   closed (every edge shared by exactly two triangles), volume (m³, null when
 *                   refused), fault (why extract would refuse the body, or null)
 *     planes        { groundPlane: { axis, offset (m) } | null,
 *                     symmetry: [{ axis, offset (m), images "even" | "odd" | "both", mirrored? }],
 *                     inSymmetryPlane (triangles in a symmetry plane, dropped by a solve),
 *                     fault (a conductor crossing or touching a plane where that is refused, or null) }
 *                   ok is false when any fault is set
 */
import type { LoadedMesh } from "../io/load.js";
import type { LengthUnit } from "../io/units.js";
import type { CheckReport } from "../mesh/check.js";
import type { RemeshSummary } from "../mesh/remesh.js";
import { version } from "../version.js";
import type { SceneSurroundingsCheck, DielectricCheck } from "../extract/scene-check.js";

/** The `scene` object of the check report (field list above). */
export interface SceneCheckJson {
  file: string;
  dielectrics: DielectricCheck[];
  planes: { groundPlane: SceneSurroundingsCheck["groundPlane"]; symmetry: SceneSurroundingsCheck["symmetry"]; inSymmetryPlane: number; fault: string | null };
}

/** The check report as written to JSON (SI units; field list above). */
export interface CheckReportJson {
  tool: "sigmesh";
  command: "check";
  version: string;
  files: string[];
  inputUnit: LengthUnit;
  unitAssumed: boolean;
  ok: boolean;
  triangles: number;
  vertices: number;
  welded: number;
  dropped: number;
  warnings: LoadedMesh["warnings"];
  conductors: CheckReport["conductors"];
  pairs: CheckReport["pairs"];
  remesh: RemeshSummary | null;
  scene?: SceneCheckJson;
}

/** The JSON report of `report`, the check of the mesh `loaded` read in `unit`. */
export function checkReport(loaded: LoadedMesh, report: CheckReport, unit: LengthUnit, unitAssumed: boolean,
  scene?: { file: string; check: SceneSurroundingsCheck }, remesh?: RemeshSummary): CheckReportJson {
  const out: CheckReportJson = {
    tool: "sigmesh", command: "check", version: version(),
    files: loaded.files, inputUnit: unit, unitAssumed,
    ok: !report.failed, triangles: report.triangles, vertices: report.vertices,
    welded: loaded.welded, dropped: loaded.dropped, warnings: loaded.warnings,
    conductors: report.conductors, pairs: report.pairs,
    remesh: remesh ? { patches: remesh.patches, neighbours: remesh.neighbours, panelsBefore: remesh.panelsBefore, panelsAfter: remesh.panelsAfter,
      worstAspectBefore: remesh.worstAspectBefore, worstAspectAfter: remesh.worstAspectAfter, trianglesBefore: remesh.trianglesBefore, trianglesAfter: remesh.trianglesAfter } : null,
  };
  if (scene) {
    const s = scene.check;
    out.scene = {
      file: scene.file, dielectrics: s.dielectrics,
      planes: { groundPlane: s.groundPlane, symmetry: s.symmetry, inSymmetryPlane: s.inSymmetryPlane, fault: s.fault },
    };
    if (s.fault !== null || s.dielectrics.some((d) => d.fault !== null)) out.ok = false;
  }
  return out;
}
