/**
 * Dielectric bodies as a scene gives them, and their preparation: each body must be a closed,
 * manifold surface enclosing a volume; it is oriented outward so that containment queries
 * (./dielectric-media.ts) and the interface-panel model (./dielectric-model.ts) can trust its normals.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { triangleCount, concatMeshes } from "../mesh/model.js";
import { conductorProximity, resolveOverlaps } from "../mesh/proximity.js";
import { orientSurfaces, conductorTopology, buildEdgeTable } from "../mesh/topology.js";
import { signedVolume } from "../mesh/measure.js";
import { InputError } from "../errors.js";

export interface DielectricBody {
  name: string;
  /** Closed surface; metres. */
  mesh: SurfaceMesh;
  /** Relative permittivity inside. */
  permittivity: number;
}

/** A body checked and oriented outward, with what containment queries need. */
export interface PreparedBody {
  name: string;
  permittivity: number;
  mesh: SurfaceMesh;
  /** m³, positive. */
  volume: number;
  flipped: boolean;
}

/** Two dielectric bodies whose surfaces cross: they partly overlap. */
export interface BodyOverlap {
  a: string;
  b: string;
  /** A point where the surfaces cross; metres. */
  position: [number, number, number];
}

/**
 * Pairs of bodies that partly overlap: their surfaces cross (the conductors' contact search,
 * src/mesh/proximity.ts, over the bodies as conductors; the bodies oriented outward). The region both enclose would have two
 * permittivities, so such a model is refused; a body wholly inside another (a nested medium)
 * and bodies that only touch are allowed: containment decides each point's medium.
 */
export function bodyOverlaps(bodies: ReadonlyArray<{ name: string; mesh: SurfaceMesh }>): BodyOverlap[] {
  if (bodies.length < 2) return [];
  const all = concatMeshes(bodies.map((b) => ({ positions: b.mesh.positions, triangles: b.mesh.triangles, conductor: new Uint32Array(triangleCount(b.mesh)), names: [b.name] })));
  // Only crossings matter: a narrow candidate margin keeps the search to touching triangles.
  // Surfaces that meet along mesh edges (a face split exactly where the other body's face
  // crosses it) show no crossing pair: resolveOverlaps tells those from bodies that only touch.
  const found = conductorProximity(all, { gapFactor: 1e-3 });
  resolveOverlaps(all, found, bodies.map(() => true));
  return found.filter((f) => f.kind === "intersect")
    .map((f) => ({ a: bodies[f.a].name, b: bodies[f.b].name, position: f.position }));
}

/** The fault of an overlap as a sentence; `where` formats the point. */
export function overlapSentence(o: BodyOverlap, where: (p: [number, number, number]) => string): string {
  return `dielectrics ${o.a} and ${o.b} partly overlap (their surfaces cross at ${where(o.position)}): the common region would have two permittivities; `
    + "make one body end where the other begins, or nest one wholly inside the other";
}

/**
 * Check and orient the bodies; InputError naming the body for open, non-manifold or bad input,
 * and naming both bodies of a partial overlap (`describePoint` formats its place; default metres).
 */
export function prepareBodies(bodies: DielectricBody[], background: number,
  describePoint: (p: [number, number, number]) => string = (p) => `(${p.join(", ")}) m`): PreparedBody[] {
  const prepared = prepareEach(bodies, background);
  const overlaps = bodyOverlaps(prepared);
  if (overlaps.length > 0) throw new InputError(overlapSentence(overlaps[0], describePoint) + (overlaps.length > 1 ? ` (and ${overlaps.length - 1} more overlapping pair${overlaps.length > 2 ? "s" : ""}; run sigmesh check)` : ""));
  return prepared;
}

function prepareEach(bodies: DielectricBody[], background: number): PreparedBody[] {
  const seen = new Set<string>();
  return bodies.map((b, index) => {
    const name = typeof b.name === "string" && b.name !== "" ? b.name : `dielectric ${index + 1}`;
    if (seen.has(name)) throw new InputError(`dielectric ${name}: the name is used twice`);
    seen.add(name);
    const er = b.permittivity;
    if (typeof er !== "number" || !Number.isFinite(er) || er < 1) {
      throw new InputError(`dielectric ${name}: relative permittivity must be a number of at least 1, got ${String(er)}`);
    }
    if (!b.mesh || triangleCount(b.mesh) === 0) throw new InputError(`dielectric ${name}: the interface mesh has no triangles`);
    void background;
    const single: SurfaceMesh = { positions: b.mesh.positions, triangles: b.mesh.triangles, conductor: new Uint32Array(triangleCount(b.mesh)), names: [name] };
    const table = buildEdgeTable(single);
    const topo = conductorTopology(single, table)[0];
    if (topo.boundaryEdges > 0) throw new InputError(`dielectric ${name}: the interface is not closed (${topo.boundaryEdges} boundary edges); a dielectric body must be a closed surface`);
    if (topo.nonManifoldEdges > 0) throw new InputError(`dielectric ${name}: the interface has ${topo.nonManifoldEdges} edges shared by three or more triangles`);
    const o = orientSurfaces(single, table);
    let flipped = false;
    for (const c of o.components) {
      if (c.status === "non-orientable" || c.status === "non-manifold") throw new InputError(`dielectric ${name}: the interface cannot be oriented (${c.status})`);
      if (c.status === "inward-flipped" || c.status === "repaired") flipped = true;
    }
    const volume = signedVolume(o.mesh);
    if (!(volume > 0)) throw new InputError(`dielectric ${name}: the interface encloses no volume`);
    return { name, permittivity: er, mesh: o.mesh, volume, flipped };
  });
}
