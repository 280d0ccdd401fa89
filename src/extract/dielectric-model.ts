/**
 * Dielectric bodies by the equivalent (total) charge formulation (S. M. Rao, T. K. Sarkar,
 * R. F. Harrington, IEEE Trans. MTT 32(11):1441, 1984): every charge — free and polarisation —
 * radiates in vacuum (ε0); conductor panels carry their total charge and keep the potential rows
 * of src/bem; interface panels carry polarisation charge and get the normal-displacement rows of
 * bem/interface.ts. This file builds the combined panel model of one mesh level; free charges and
 * the working point are in ./dielectric-charges.ts and ./dielectric-excitation.ts.
 *
 * The two sides of every interface panel, and the outside of every conductor panel, are read in
 * the media (./dielectric-media.ts) at points DELTA panel radii along ∓n̂ (touching bodies,
 * bodies inside bodies). Interface panels are removed where a conductor covers them (centroid on
 * a conductor panel within the coincidence tolerance and parallel), where they lie inside a
 * closed conductor, or in the ground plane; coincident panels of two touching bodies are merged
 * into one.
 */
import type { SurfaceMesh } from "../mesh/model.js";
import { boundingDiagonal, triangleCount } from "../mesh/model.js";
import { conductorTopology } from "../mesh/topology.js";
import { triangleBoxes, buildBoxTree, forEachItemInBox, type BoxTree } from "../mesh/bvh.js";
import { panelSet, type PanelSet } from "../bem/panels.js";
import { sourceFrame, frameDistance, FRAME_SIZE } from "../bem/triangle-potential.js";
import { surfaceIndex, windingNumber } from "../mesh/containment.js";
import type { AxisPlane } from "../bem/images.js";
import { InputError } from "../errors.js";
import type { PreparedBody } from "./dielectric-bodies.js";
import { Media } from "./dielectric-media.js";

export interface BodySummary {
  name: string;
  permittivity: number;
  /** Relative permittivity and name of the medium just outside (most of) its surface. */
  outsidePermittivity: number;
  outside: string;
  panels: number;
  /** Panels dropped as covered by, or enclosed in, a conductor or lying in the ground plane. */
  removed: number;
  /** Panels dropped as coincident with a panel of another body. */
  merged: number;
}

export interface DielectricModel {
  /** Conductor panels first (nc), then interface panels (ni); metres. */
  positions: Float64Array;
  triangles: Uint32Array;
  nc: number;
  ni: number;
  /** Body index of each interface panel. */
  interfaceBody: Uint32Array;
  /** Relative permittivity on the − (inside) and + (outside) side of each interface panel. */
  epsMinus: Float64Array;
  epsPlus: Float64Array;
  /** (ε+ − ε−)/(ε+ + ε−) per interface panel. */
  lambda: Float64Array;
  /** Relative permittivity just outside each conductor panel (+n̂ side) and on its −n̂ side (open sheets only; else equal). */
  conductorPlus: Float64Array;
  conductorMinus: Float64Array;
  /** Body index of the medium on the +n̂ and −n̂ side of each conductor panel, −1 for the background (equal on closed panels). */
  conductorMediumPlus: Int32Array;
  conductorMediumMinus: Int32Array;
  /** 1 for panels of open conductor sheets. */
  openPanel: Uint8Array;
  removedInterfacePanels: number;
  mergedInterfacePanels: number;
  bodies: BodySummary[];
}

/** Offset of the side-probing points, in panel radii. */
export const DELTA = 1e-4;
/** Coincidence tolerance, relative to the model's bounding diagonal. */
export const COINCIDENCE = 1e-6;
/** |n̂_a·n̂_b| at or above this counts as parallel. */
const PARALLEL = 1 - 1e-6;

/**
 * Kept interface panels hashed by centroid on a grid of cell `tol`, to find a coincident,
 * parallel panel of another body among the 27 cells around a point (O(1) per query).
 */
class PanelGrid {
  private readonly cells = new Map<string, number[]>();
  private readonly data: number[] = [];
  constructor(private readonly tol: number) {}

  private key(i: number, j: number, k: number): string { return `${i},${j},${k}`; }

  add(body: number, cx: number, cy: number, cz: number, nx: number, ny: number, nz: number): void {
    const a = this.data.length;
    this.data.push(body, cx, cy, cz, nx, ny, nz);
    const t = this.tol, k = this.key(Math.floor(cx / t), Math.floor(cy / t), Math.floor(cz / t));
    const list = this.cells.get(k);
    if (list) list.push(a); else this.cells.set(k, [a]);
  }

  /** Whether a panel of another body lies within tol of the centroid and is parallel. */
  has(body: number, cx: number, cy: number, cz: number, nx: number, ny: number, nz: number): boolean {
    const t = this.tol, D = this.data, i0 = Math.floor(cx / t), j0 = Math.floor(cy / t), k0 = Math.floor(cz / t);
    for (let i = i0 - 1; i <= i0 + 1; i++) for (let j = j0 - 1; j <= j0 + 1; j++) for (let k = k0 - 1; k <= k0 + 1; k++) {
      const list = this.cells.get(this.key(i, j, k));
      if (!list) continue;
      for (const a of list) {
        if (D[a] === body) continue;
        const dx = D[a + 1] - cx, dy = D[a + 2] - cy, dz = D[a + 3] - cz;
        if (dx * dx + dy * dy + dz * dz > t * t) continue;
        if (Math.abs(D[a + 4] * nx + D[a + 5] * ny + D[a + 6] * nz) >= PARALLEL) return true;
      }
    }
    return false;
  }
}

const FRAME = new Float64Array(FRAME_SIZE);
const QUERY = new Float64Array(6);

/**
 * The combined panel model for one mesh level: conductors (already oriented, metres) and bodies
 * (prepared, metres). `groundPlane`: interface panels in it are removed (the plane covers them);
 * a body crossing it is refused.
 */
export function dielectricModel(conductors: SurfaceMesh, bodies: PreparedBody[], background: number,
  groundPlane?: AxisPlane): DielectricModel {
  const nc = triangleCount(conductors);
  const Pc = panelSet(conductors.positions, conductors.triangles);
  let diag = boundingDiagonal(conductors.positions);
  for (const b of bodies) diag = Math.max(diag, boundingDiagonal(b.mesh.positions));
  const tol = COINCIDENCE * diag;
  const media = new Media(bodies, background);

  // Conductors: closed or open sheets, and the containment test for closed ones.
  const topo = conductorTopology(conductors);
  const openPanel = new Uint8Array(nc);
  for (let p = 0; p < nc; p++) openPanel[p] = topo[conductors.conductor[p]].closed ? 0 : 1;
  const closedTriangles: number[] = [];
  for (let p = 0; p < nc; p++) if (!openPanel[p]) closedTriangles.push(conductors.triangles[3 * p], conductors.triangles[3 * p + 1], conductors.triangles[3 * p + 2]);
  const closedIndex = surfaceIndex(conductors.positions, Uint32Array.from(closedTriangles));
  const conductorTree = buildBoxTree(triangleBoxes(conductors.positions, conductors.triangles, new Float64Array(nc).fill(tol)));

  const axis = groundPlane ? (groundPlane.axis === "x" ? 0 : groundPlane.axis === "y" ? 1 : 2) : -1;
  const all: { body: number; panels: PanelSet }[] = bodies.map((b, i) => ({ body: i, panels: panelSet(b.mesh.positions, b.mesh.triangles) }));
  const summaries: BodySummary[] = bodies.map((b) => ({ name: b.name, permittivity: b.permittivity, outsidePermittivity: background, outside: "background", panels: 0, removed: 0, merged: 0 }));
  if (groundPlane) {
    for (const { body, panels: Q } of all) {
      let below = false, above = false;
      for (let a = 0; a < 3 * Q.n; a++) {
        const d = Q.vertices[3 * a + axis] - groundPlane.offset;
        if (d < -tol) below = true; else if (d > tol) above = true;
      }
      if (below && above) throw new InputError(`dielectric ${bodies[body].name} crosses the ground plane ${groundPlane.axis} = ${groundPlane.offset} m; it must lie on one side`);
    }
  }

  // Keep-or-drop per interface panel, in body order.
  const kept: { body: number; t: number }[] = [];
  const twins = new PanelGrid(tol);
  let removed = 0, merged = 0;
  for (const { body, panels: Q } of all) {
    for (let t = 0; t < Q.n; t++) {
      const cx = Q.centroids[3 * t], cy = Q.centroids[3 * t + 1], cz = Q.centroids[3 * t + 2];
      const nx = Q.normals[3 * t], ny = Q.normals[3 * t + 1], nz = Q.normals[3 * t + 2];
      if (Q.areas[t] === 0) { removed++; summaries[body].removed++; continue; }
      if (axis >= 0 && Math.abs(Q.vertices[9 * t + axis] - groundPlane!.offset) <= tol && Math.abs(Q.vertices[9 * t + 3 + axis] - groundPlane!.offset) <= tol
        && Math.abs(Q.vertices[9 * t + 6 + axis] - groundPlane!.offset) <= tol) { removed++; summaries[body].removed++; continue; }
      if (coveredByConductor(conductorTree, Pc, cx, cy, cz, nx, ny, nz, tol) || windingNumber(closedIndex, cx, cy, cz) >= 1) {
        removed++; summaries[body].removed++; continue;
      }
      const twin = twins.has(body, cx, cy, cz, nx, ny, nz);
      if (twin) { merged++; summaries[body].merged++; continue; }
      kept.push({ body, t });
      twins.add(body, cx, cy, cz, nx, ny, nz);
    }
  }

  // Combined vertex and triangle arrays: conductor vertices, then the kept panels' own corners
  // (body vertices are shared within a body, so touching-panel detection keeps working).
  const ni = kept.length;
  let nv = conductors.positions.length / 3;
  const vertexBase: number[] = [];
  for (const b of bodies) { vertexBase.push(nv); nv += b.mesh.positions.length / 3; }
  const positions = new Float64Array(3 * nv);
  positions.set(conductors.positions, 0);
  bodies.forEach((b, i) => positions.set(b.mesh.positions, 3 * vertexBase[i]));
  const triangles = new Uint32Array(3 * (nc + ni));
  triangles.set(conductors.triangles, 0);
  const interfaceBody = new Uint32Array(ni), epsMinus = new Float64Array(ni), epsPlus = new Float64Array(ni), lambda = new Float64Array(ni);
  const outsideVotes = bodies.map(() => new Map<number, number>());
  for (let a = 0; a < ni; a++) {
    const { body, t } = kept[a], Q = all[body].panels, tr = bodies[body].mesh.triangles;
    for (let m = 0; m < 3; m++) triangles[3 * (nc + a) + m] = vertexBase[body] + tr[3 * t + m];
    interfaceBody[a] = body;
    const d = DELTA * Q.radii[t];
    const cx = Q.centroids[3 * t], cy = Q.centroids[3 * t + 1], cz = Q.centroids[3 * t + 2];
    const nx = Q.normals[3 * t], ny = Q.normals[3 * t + 1], nz = Q.normals[3 * t + 2];
    const inner = media.bodyAt(cx - d * nx, cy - d * ny, cz - d * nz);
    const outer = media.bodyAt(cx + d * nx, cy + d * ny, cz + d * nz);
    const em = inner < 0 ? background : bodies[inner].permittivity, ep = outer < 0 ? background : bodies[outer].permittivity;
    epsMinus[a] = em; epsPlus[a] = ep; lambda[a] = (ep - em) / (ep + em);
    const votes = outsideVotes[body];
    votes.set(outer, (votes.get(outer) ?? 0) + Q.areas[t]);
    summaries[body].panels++;
  }
  bodies.forEach((_, b) => {
    let best = -1, w = -1;
    for (const [o, area] of outsideVotes[b]) if (area > w) { w = area; best = o; }
    if (w >= 0) { summaries[b].outside = media.name(best); summaries[b].outsidePermittivity = best < 0 ? background : bodies[best].permittivity; }
  });

  const conductorPlus = new Float64Array(nc), conductorMinus = new Float64Array(nc);
  const conductorMediumPlus = new Int32Array(nc), conductorMediumMinus = new Int32Array(nc);
  for (let p = 0; p < nc; p++) {
    const d = DELTA * Pc.radii[p];
    const cx = Pc.centroids[3 * p], cy = Pc.centroids[3 * p + 1], cz = Pc.centroids[3 * p + 2];
    const nx = Pc.normals[3 * p], ny = Pc.normals[3 * p + 1], nz = Pc.normals[3 * p + 2];
    const bp = media.bodyAt(cx + d * nx, cy + d * ny, cz + d * nz);
    const bm = openPanel[p] ? media.bodyAt(cx - d * nx, cy - d * ny, cz - d * nz) : bp;
    conductorMediumPlus[p] = bp; conductorMediumMinus[p] = bm;
    conductorPlus[p] = bp < 0 ? background : bodies[bp].permittivity;
    conductorMinus[p] = bm < 0 ? background : bodies[bm].permittivity;
  }
  return {
    positions, triangles, nc, ni, interfaceBody, epsMinus, epsPlus, lambda, conductorPlus, conductorMinus,
    conductorMediumPlus, conductorMediumMinus, openPanel,
    removedInterfacePanels: removed, mergedInterfacePanels: merged, bodies: summaries,
  };
}

let coverHit = false, coverX = 0, coverY = 0, coverZ = 0, coverNx = 0, coverNy = 0, coverNz = 0, coverTol = 0;
let coverP: PanelSet | undefined;
function coverVisit(j: number): void {
  if (coverHit || coverP === undefined) return;
  const P = coverP, nm = P.normals;
  const dot = nm[3 * j] * coverNx + nm[3 * j + 1] * coverNy + nm[3 * j + 2] * coverNz;
  if (Math.abs(dot) < PARALLEL) return;
  sourceFrame(FRAME, P.vertices, 9 * j);
  if (frameDistance(FRAME, coverX, coverY, coverZ) <= coverTol) coverHit = true;
}

/** Whether the point lies on a conductor panel parallel to (nx, ny, nz), within tol. */
function coveredByConductor(tree: BoxTree, P: PanelSet, x: number, y: number, z: number, nx: number, ny: number, nz: number, tol: number): boolean {
  coverHit = false; coverP = P; coverX = x; coverY = y; coverZ = z; coverNx = nx; coverNy = ny; coverNz = nz; coverTol = tol;
  QUERY[0] = x; QUERY[1] = y; QUERY[2] = z; QUERY[3] = x; QUERY[4] = y; QUERY[5] = z;
  forEachItemInBox(tree, QUERY, coverVisit);
  coverP = undefined;
  return coverHit;
}
