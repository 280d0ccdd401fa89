/**
 * Dielectric bodies as a scene gives them, and their preparation: each body must be a closed,
 * manifold surface enclosing a volume; it is oriented outward so that containment queries
 * (./dielectric-media.ts) and the interface-panel model (./dielectric-model.ts) can trust its normals.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { triangleCount } from "../mesh/model.js";
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

/** Check and orient the bodies; InputError naming the body for open, non-manifold or bad input. */
export function prepareBodies(bodies: DielectricBody[], background: number): PreparedBody[] {
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
