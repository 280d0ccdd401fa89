/**
 * Disks and cylinders carry their faces and reference surfaces (src/mesh/primitives/disk.ts,
 * cylinder.ts), so uniform refinement converges to the true disk and cylinder, not to the
 * coarse polygon. Without the reference (the same mesh stripped of `faces` and `reference`, as
 * these generators gave it before) the rim stays the polygon: the checks below measure both.
 */
import { describe, it, expect, afterAll } from "vitest";
import { diskMesh, diskLayout, diskFromLayout, cylinderMesh } from "../../src/mesh/primitives/index.js";
import { placeShape } from "../../src/mesh/primitives/placement.js";
import { refineLevel } from "../../src/mesh/refine.js";
import { meshEdges } from "../../src/mesh/edges.js";
import { surfaceArea } from "../../src/mesh/measure.js";
import type { SurfaceMesh } from "../../src/mesh/model.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { EPSILON_0 } from "../../src/extract/constants.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());

/** The mesh without its faces and reference: refinement then works from the mesh alone (refine.ts). */
const bare = (m: SurfaceMesh): SurfaceMesh => ({ positions: m.positions, triangles: m.triangles, conductor: m.conductor, names: m.names });

function refined(m: SurfaceMesh, levels: number): SurfaceMesh {
  for (let l = 0; l < levels; l++) m = refineLevel(m).mesh;
  return m;
}

/** Vertices on the boundary (open rim) of m. */
/** `err` falls by 3.9 to 4.1 with each of `levels` uniform refinements of `m` (second order in h). */
function expectSecondOrder(m: SurfaceMesh, err: (m: SurfaceMesh) => number, levels: number): void {
  let e = err(m);
  for (let l = 1; l <= levels; l++) {
    m = refineLevel(m).mesh;
    const next = err(m);
    expect(e / next).toBeGreaterThan(3.9);
    expect(e / next).toBeLessThan(4.1);
    e = next;
  }
}

function rimVertices(m: SurfaceMesh): Set<number> {
  const e = meshEdges(m), out = new Set<number>();
  for (let i = 0; i < e.count; i++) if (e.faces[i] === 1) { out.add(e.v0[i]); out.add(e.v1[i]); }
  return out;
}

/** Vertices on edges between triangles of different reference faces. */
function faceCurveVertices(m: SurfaceMesh): Set<number> {
  const e = meshEdges(m), out = new Set<number>(), f = m.faces!;
  for (let i = 0; i < e.count; i++) {
    if (e.faces[i] !== 2) continue;
    const t0 = Math.floor(e.half0[i] / 3), t1 = Math.floor(e.half1[i] / 3);
    if (f[t0] !== f[t1]) { out.add(e.v0[i]); out.add(e.v1[i]); }
  }
  return out;
}

/** Fingerprint of a triangulation: sizes, a weighted sum of the coordinates, a hash of the indices. */
function fingerprint(m: SurfaceMesh): string {
  let s = 0, t = 0;
  for (let i = 0; i < m.positions.length; i++) s += m.positions[i] * (1 + (i % 7));
  for (let i = 0; i < m.triangles.length; i++) t = (t * 31 + m.triangles[i]) % 1000000007;
  return `${m.positions.length} ${m.triangles.length} ${s} ${t}`;
}

describe("disk reference surface", () => {
  const R = 0.02;

  it("the coarse disk is the one the layout gives, as before; one face, normal along the axis", () => {
    const m = diskMesh({ radius: R, divisions: 7, grading: 3, axis: "x", center: [1, 2, 3] });
    const d = diskFromLayout(diskLayout(R, 7, 3));
    placeShape(d.positions, "x", [1, 2, 3]);
    expect(m.positions).toEqual(d.positions);
    expect(m.triangles).toEqual(d.triangles);
    // Recorded from the generator before it carried a reference (same parameters).
    expect(fingerprint(diskMesh({ radius: 0.01, divisions: 7, grading: 3, axis: "x", center: [1, 2, 3] }))).toBe("819 1398 6552.004777387912 895293493");
    expect(fingerprint(diskMesh({ radius: 2, panelSize: 0.3 }))).toBe("507 882 -4.909738437416437 664407512");
    expect(m.reference!.faceCount).toBe(1);
    expect([...new Set(m.faces)]).toEqual([0]);
    const n = m.reference!.normals;
    for (let i = 0; i < n.length; i += 3) expect([n[i], n[i + 1], n[i + 2]]).toEqual([1, 0, 0]);
  });

  it("after one and two refinements the rim lies on the circle to 1e-9 and the inside in the plane (without the reference: off by 1 - cos(pi/m))", () => {
    const c = [1e-3, -2e-3, 5e-3];
    const coarse = diskMesh({ radius: R, divisions: 4, grading: 2, axis: "x", center: c });
    const m = diskLayout(R, 4, 2).segments[3];
    for (const levels of [1, 2]) {
      for (const withRef of [true, false]) {
        const f = refined(withRef ? coarse : bare(coarse), levels), p = f.positions;
        let rim = 0, plane = 0;
        for (const v of rimVertices(f)) rim = Math.max(rim, Math.abs(Math.hypot(p[3 * v + 1] - c[1], p[3 * v + 2] - c[2]) / R - 1));
        for (let i = 0; i < p.length; i += 3) plane = Math.max(plane, Math.abs(p[i] - c[0]));
        expect(plane).toBeLessThanOrEqual(1e-15);
        // Measured: 4e-16 with the reference; 4.0e-3 without (m = 25: 1 - cos(pi/25) = 7.9e-3 at an edge's midpoint).
        if (withRef) expect(rim).toBeLessThan(1e-9);
        else expect(rim).toBeGreaterThan(0.25 * (1 - Math.cos(Math.PI / m)));
      }
    }
  });

  it("the area converges to pi R^2 at second order (x4 per level); without the reference it stays the polygon's", () => {
    const coarse = diskMesh({ radius: R, divisions: 4, grading: 2 });
    const err = (m: SurfaceMesh): number => surfaceArea(m) / (Math.PI * R * R) - 1;
    // Measured: -5.36e-3, -1.34e-3, -3.36e-4, -8.39e-5 (ratios 4.00).
    expectSecondOrder(coarse, err, 3);
    expect(Math.abs(err(refined(bare(coarse), 2)) - err(coarse))).toBeLessThan(1e-12);
  });

  // Measured (Galerkin, refine 2 from 131 panels, 4 rings graded 2): relative error -4.4e-4 with the
  // reference against -2.76e-3 without (the refined solves of the 25-gon); the estimate is 3.2e-3 in both.
  it("thin disk C = 8 ε0 R (Jackson, Classical Electrodynamics, 3rd ed., §3.12) with refine 2 from 131 panels: error -4.4e-4 with the reference, -2.8e-3 without", async () => {
    const coarse = diskMesh({ radius: R, divisions: 4, grading: 2 });
    const exact = 8 * EPSILON_0 * R;
    const withRef = await extractMesh(coarse, { refine: 2 });
    const without = await extractMesh(bare(coarse), { refine: 2 });
    const eWith = Math.abs(withRef.maxwell[0] / exact - 1), eWithout = Math.abs(without.maxwell[0] / exact - 1);
    expect(eWith).toBeLessThan(1e-3);
    expect(eWithout).toBeGreaterThan(2e-3);
    expect(eWith).toBeLessThanOrEqual(withRef.accuracy!.richardson.relativeError);
    // New rim points moved off their straight midpoints: no lower-bound claim.
    expect(withRef.accuracy!.nested).toBe(false);
  });
});

describe("cylinder reference surface", () => {
  const R = 1e-3, H = 1.5e-3;

  it("the coarse cylinder is as before; side, top and bottom faces with their exact normals", () => {
    // Recorded from the generator before it carried a reference (same parameters).
    expect(fingerprint(cylinderMesh({ radius: 0.5, height: 2, divisions: 20, grading: 2, axis: "y", center: [0, 1, -1] }))).toBe("990 1968 -0.7742356342368006 831925219");
    expect(fingerprint(cylinderMesh({ radius: 1e-3, height: 1e-4, panelSize: 2e-4 }))).toBe("558 1104 -0.0019670352981992047 983178748");
    const m = cylinderMesh({ radius: R, height: H, divisions: 12 });
    expect(m.reference!.faceCount).toBe(3);
    const p = m.positions, tr = m.triangles;
    for (let t = 0; t < m.faces!.length; t++) {
      const z = (p[3 * tr[3 * t] + 2] + p[3 * tr[3 * t + 1] + 2] + p[3 * tr[3 * t + 2] + 2]) / 3;
      expect(m.faces![t]).toBe(Math.abs(z - H / 2) < 1e-15 ? 1 : Math.abs(z + H / 2) < 1e-15 ? 2 : 0);
    }
    const ref = m.reference!;
    for (let v = 0; v < ref.positions.length / 3; v++) {
      const x = ref.positions[3 * v], y = ref.positions[3 * v + 1], z = ref.positions[3 * v + 2];
      // Every reference vertex is on its face, its normal outward (the side's radial, the caps' ±z).
      if (Math.abs(ref.normals[3 * v + 2]) === 1) expect(z).toBe((ref.normals[3 * v + 2] * H) / 2);
      else {
        expect(Math.abs(Math.hypot(x, y) / R - 1)).toBeLessThan(1e-15);
        expect(ref.normals[3 * v] * x + ref.normals[3 * v + 1] * y).toBeCloseTo(R, 18);
      }
    }
  });

  it("after one and two refinements side points are on the cylinder, cap points in their planes, the rims on the circles (to 1e-9)", () => {
    const coarse = cylinderMesh({ radius: R, height: H, divisions: 12, grading: 2 });
    for (const levels of [1, 2]) {
      const f = refined(coarse, levels), p = f.positions, tr = f.triangles;
      const onCurve = faceCurveVertices(f);
      let side = 0, cap = 0, rim = 0;
      for (let t = 0; t < f.faces!.length; t++) {
        for (let j = 0; j < 3; j++) {
          const v = tr[3 * t + j], rho = Math.hypot(p[3 * v], p[3 * v + 1]), z = p[3 * v + 2];
          if (f.faces![t] === 0) side = Math.max(side, Math.abs(rho / R - 1));
          else cap = Math.max(cap, Math.abs(Math.abs(z) / (H / 2) - 1));
          if (onCurve.has(v)) rim = Math.max(rim, Math.abs(rho / R - 1), Math.abs(Math.abs(z) / (H / 2) - 1));
        }
      }
      // Measured: 7e-16, 0 and 6e-16. Without the reference (12 segments, 30° between facets)
      // side midpoints stay on the facets, 1 - cos(15°) = 3.4e-2 inside.
      expect(side).toBeLessThan(1e-9);
      expect(cap).toBeLessThan(1e-15);
      expect(rim).toBeLessThan(1e-9);
      expect(onCurve.size).toBe(2 * 12 * 2 ** levels);
    }
    const f = refined(bare(coarse), 1), p = f.positions;
    let side = 0;
    for (let i = 0; i < p.length; i += 3) side = Math.max(side, Math.abs(Math.hypot(p[i], p[i + 1]) / R - 1));
    expect(side).toBeGreaterThan(1e-2);
  });

  it("a rod 2000 radii long refines onto its reference too (one row of reference quads would lose 2e-4 of it to rounding)", () => {
    const r = 1e-4, h = 0.2;
    const f = refineLevel(cylinderMesh({ radius: r, height: h, divisions: 4, grading: 3 })).mesh;
    expect(f.faces).toBeDefined();
    const p = f.positions;
    let side = 0;
    for (let t = 0; t < f.faces!.length; t++) {
      if (f.faces![t] !== 0) continue;
      for (let j = 0; j < 3; j++) { const v = 3 * f.triangles[3 * t + j]; side = Math.max(side, Math.abs(Math.hypot(p[v], p[v + 1]) / r - 1)); }
    }
    // Measured: 7e-13 (the reference's side: 1024 segments around, rows of aspect up to 1e4).
    expect(side).toBeLessThan(1e-9);
  });

  it("the area converges to 2 pi R (R + H) at second order", () => {
    const err = (x: SurfaceMesh): number => surfaceArea(x) / (2 * Math.PI * R * (R + H)) - 1;
    // Measured: -2.49e-2, -6.27e-3, -1.57e-3.
    expectSecondOrder(cylinderMesh({ radius: R, height: H, divisions: 12 }), err, 2);
  });
});
