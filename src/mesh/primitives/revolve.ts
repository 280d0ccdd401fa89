/**
 * Surfaces of revolution about the local z axis from a profile in the (rho, z) half-plane:
 * straight pieces and circular arcs, each an analytic face. Each profile node becomes a ring of
 * vertices (one vertex where rho = 0, a pole); each ring has about 2 pi rho / h segments for the
 * nominal spacing h, so triangles stay near the shape of the profile spacing whatever the
 * radius (the washer's annulus, a hemisphere toward its pole). Neighbouring rings are joined by
 * the shortest-diagonal rule, as the disk's rings are (./disk.ts), which is conforming for any
 * pair of segment counts.
 *
 * Orientation: the profile runs with the body on its left (rho to the right, z up). With
 * p(s, a) = (rho(s) cos a, rho(s) sin a, z(s)), dp/da x dp/ds then points away from the body, so
 * the triangle (ring k vertex j, ring k vertex j+1, ring k+1 vertex j) is counter-clockwise
 * seen from outside.
 */
import type { FacedTriangulation, FaceNormal } from "./reference.js";
import { symmetricNodes } from "./grading.js";
import { checkTriangleBudget } from "./placement.js";

export interface ProfileNode {
  /** Distance from the axis; metres (0 for a pole). */
  rho: number;
  /** metres */
  z: number;
}

/** A profile: its nodes in order and the face code of the band after each node. */
export interface Profile {
  nodes: ProfileNode[];
  /** Face of the band from node k to node k+1 (for a closed profile the last band runs back to node 0). */
  bandFace: number[];
  /** The last node joins the first (a ring-shaped body such as a washer). */
  closed: boolean;
}

/** The unit normal of a face in the profile plane at (rho, z): [n_rho, n_z]. */
export type ProfileNormal = (rho: number, z: number) => readonly [number, number];

export function emptyProfile(closed: boolean): Profile {
  return { nodes: [], bandFace: [], closed };
}

/**
 * Append a straight piece from the profile's last node (or `from`, for the first piece) to `to`,
 * in `n` steps graded toward both ends by `grading` (largest / smallest step; 1 = uniform).
 */
export function addLine(profile: Profile, from: ProfileNode, to: ProfileNode, n: number, face: number, grading = 1): void {
  const s = symmetricNodes(n, grading);
  if (profile.nodes.length === 0) profile.nodes.push(from);
  for (let i = 1; i <= n; i++) {
    const t = 0.5 * (s[i] + 1);
    profile.nodes.push(i === n ? to : { rho: from.rho + t * (to.rho - from.rho), z: from.z + t * (to.z - from.z) });
    profile.bandFace.push(face);
  }
}

/** Append a circular arc about (rho0, z0) of radius r from angle a0 to a1 (radians, measured from +rho toward +z) in `n` equal steps. */
export function addArc(profile: Profile, rho0: number, z0: number, r: number, a0: number, a1: number, n: number, face: number): void {
  const at = (a: number): ProfileNode => {
    // Exact zeros at the quarter angles keep poles on the axis and flat pieces flat.
    const c = Math.abs(Math.cos(a)) < 1e-15 ? 0 : Math.cos(a), s = Math.abs(Math.sin(a)) < 1e-15 ? 0 : Math.sin(a);
    return { rho: Math.max(0, rho0 + r * c), z: z0 + r * s };
  };
  if (profile.nodes.length === 0) profile.nodes.push(at(a0));
  for (let i = 1; i <= n; i++) {
    profile.nodes.push(at(a0 + ((a1 - a0) * i) / n));
    profile.bandFace.push(face);
  }
}

/** Segments of a ring at radius rho for the nominal spacing h, at least `min` (1 at a pole). */
export function ringSegments(rho: number, h: number, min: number): number {
  return rho <= 0 ? 1 : Math.max(min, Math.round((2 * Math.PI * rho) / h));
}

/**
 * Triangulate the profile swept about z. `segments[k]` is the ring count of node k (1 where
 * rho = 0). For a closed profile the last node must not repeat the first.
 */
export function revolve(profile: Profile, segments: readonly number[]): FacedTriangulation {
  const { nodes, bandFace, closed } = profile;
  const rings = nodes.length;
  const bands = closed ? rings : rings - 1;
  if (bandFace.length !== bands) throw new Error(`revolve: ${bandFace.length} band faces for ${bands} bands`);
  const first = new Uint32Array(rings);
  let nv = 0, nt = 0;
  for (let k = 0; k < rings; k++) { first[k] = nv; nv += segments[k]; }
  for (let b = 0; b < bands; b++) {
    const mi = segments[b], mo = segments[(b + 1) % rings];
    nt += mi === 1 ? mo : mo === 1 ? mi : mi + mo;
  }
  checkTriangleBudget(nt, `surface of revolution with ${rings} rings`);
  const positions = new Float64Array(3 * nv);
  for (let k = 0; k < rings; k++) {
    const m = segments[k], { rho, z } = nodes[k];
    for (let j = 0; j < m; j++) {
      const a = (2 * Math.PI * j) / m, v = 3 * (first[k] + j);
      positions[v] = m === 1 ? 0 : rho * Math.cos(a);
      positions[v + 1] = m === 1 ? 0 : rho * Math.sin(a);
      positions[v + 2] = z;
    }
  }
  const triangles = new Uint32Array(3 * nt);
  const faces = new Uint32Array(nt);
  let o = 0;
  const put = (a: number, b: number, c: number, f: number): void => {
    faces[o / 3] = f;
    triangles[o++] = a; triangles[o++] = b; triangles[o++] = c;
  };
  for (let b = 0; b < bands; b++) {
    const k1 = (b + 1) % rings;
    const mi = segments[b], mo = segments[k1], fi = first[b], fo = first[k1], f = bandFace[b];
    if (mi === 1) {
      for (let j = 0; j < mo; j++) put(fi, fo + ((j + 1) % mo), fo + j, f);
      continue;
    }
    if (mo === 1) {
      for (let i = 0; i < mi; i++) put(fi + i, fi + ((i + 1) % mi), fo, f);
      continue;
    }
    let i = 0, j = 0;
    while (i < mi || j < mo) {
      // Shortest-diagonal rule (Christiansen & Sederberg, SIGGRAPH 1978), as in ./disk.ts:
      // of the two possible new edges take the one closer to the meridian, angles compared exactly.
      const advanceInner = j === mo || (i < mi && Math.abs((i + 1) * mo - j * mi) <= Math.abs((j + 1) * mi - i * mo));
      if (advanceInner) { put(fi + i, fi + ((i + 1) % mi), fo + (j % mo), f); i++; }
      else { put(fi + (i % mi), fo + ((j + 1) % mo), fo + j, f); j++; }
    }
  }
  if (o !== triangles.length) throw new Error("revolve: internal triangle count mismatch");
  return { positions, triangles, faces };
}

/** A face normal for `facedShape` from each face's normal in the profile plane (faces by code). */
export function revolvedNormal(byFace: readonly ProfileNormal[]): FaceNormal {
  return (out, oo, face, p, o) => {
    const x = p[o], y = p[o + 1], rho = Math.hypot(x, y);
    const [nr, nz] = byFace[face](rho, p[o + 2]);
    out[oo] = rho > 0 ? (nr * x) / rho : 0;
    out[oo + 1] = rho > 0 ? (nr * y) / rho : 0;
    out[oo + 2] = nz;
  };
}
