// Picking and flights (viewer/src/picking.ts) in Node: three.js's ray casting needs no
// WebGL, so a real camera and real meshes check which panel a pointer lands on, through a
// hidden conductor, past the clipping plane, and the maths of the flight to a hot spot.
import { describe, it, expect } from "vitest";
import * as THREE from "three";
import { pointerNdc, isClick, pickPanel, panelNormal, flightDistance, easeFlight, CLICK_SLOP } from "../../viewer/src/picking.js";
import type { ViewerData } from "../../viewer/src/data.js";

describe("pointer", () => {
  const rect = { left: 100, top: 50, width: 400, height: 200 };
  it("maps the canvas to normalised device coordinates, y up", () => {
    expect(pointerNdc(300, 150, rect)).toEqual([0, 0]);
    expect(pointerNdc(100, 50, rect)).toEqual([-1, 1]);
    expect(pointerNdc(500, 250, rect)).toEqual([1, -1]);
    expect(pointerNdc(200, 100, rect)).toEqual([-0.5, 0.5]);
  });

  it("tells a click from a drag by how far the pointer went", () => {
    expect(isClick(null, 10, 10)).toBe(false);
    expect(isClick([10, 10], 13, 10)).toBe(true);
    expect(isClick([10, 10], 10 + CLICK_SLOP, 10)).toBe(true);
    expect(isClick([10, 10], 13, 14)).toBe(false); // 5 px
  });
});

/** A unit square at height z as two triangles wound counter-clockwise seen from +z: below the diagonal y = x, then above. */
function square(z: number, conductor: number): any {
  const p = Float32Array.of(0, 0, z, 1, 0, z, 1, 1, z, 0, 0, z, 1, 1, z, 0, 1, z);
  const g = new THREE.BufferGeometry();
  g.setAttribute("position", new THREE.BufferAttribute(p, 3));
  const m = new THREE.Mesh(g, new THREE.MeshBasicMaterial());
  m.userData.conductor = conductor;
  m.updateMatrixWorld();
  return m;
}

function cameraAbove(x: number, y: number): any {
  const c = new THREE.PerspectiveCamera(40, 1, 0.01, 100);
  c.position.set(x, y, 5);
  c.up.set(0, 1, 0);
  c.lookAt(x, y, 0);
  c.updateMatrixWorld();
  return c;
}

describe("pickPanel", () => {
  // Conductor 0's panels are panels 0 and 2 of the page, conductor 1's panels 1 and 3: the
  // face index of a hit must be looked up in its conductor's list.
  const lists = [Uint32Array.of(0, 2), Uint32Array.of(1, 3)];
  const top = square(0, 0), bottom = square(-1, 1);

  it("returns the page's index of the panel under the pointer, nearest surface first", () => {
    expect(pickPanel(cameraAbove(0.7, 0.2), [0, 0], [top, bottom], null, lists)).toBe(0);
    expect(pickPanel(cameraAbove(0.2, 0.7), [0, 0], [top, bottom], null, lists)).toBe(2);
  });

  it("looks through a hidden conductor (its mesh not among those given)", () => {
    expect(pickPanel(cameraAbove(0.7, 0.2), [0, 0], [bottom], null, lists)).toBe(1);
    expect(pickPanel(cameraAbove(0.2, 0.7), [0, 0], [bottom], null, lists)).toBe(3);
  });

  it("skips what the clipping plane cuts away", () => {
    const keepBelow = new THREE.Plane(new THREE.Vector3(0, 0, -1), -0.5); // keeps z ≤ -0.5
    expect(pickPanel(cameraAbove(0.7, 0.2), [0, 0], [top, bottom], keepBelow, lists)).toBe(1);
    const keepAbove = new THREE.Plane(new THREE.Vector3(0, 0, 1), 0.5); // keeps z ≥ -0.5
    expect(pickPanel(cameraAbove(0.7, 0.2), [0, 0], [top, bottom], keepAbove, lists)).toBe(0);
  });

  it("returns -1 off the model", () => {
    expect(pickPanel(cameraAbove(3, 3), [0, 0], [top, bottom], null, lists)).toBe(-1);
    // A pointer at the canvas corner misses a square seen from 5 away with a 40° view.
    expect(pickPanel(cameraAbove(0.5, 0.5), [1, 1], [top, bottom], null, lists)).toBe(-1);
  });
});

describe("flight to a hot spot", () => {
  // Panel 0 of a closed conductor, panel 1 of an open sheet, panel 2 degenerate; all in z = 0,
  // wound counter-clockwise seen from +z.
  const v = {
    positions: Float32Array.of(0, 0, 0, 2, 0, 0, 0, 2, 0, 4, 0, 0),
    triangles: Uint32Array.of(0, 1, 2, 0, 1, 2, 0, 1, 3),
    panelConductor: Uint32Array.of(0, 1, 0), closed: [true, false],
  } as unknown as ViewerData;
  const above = new THREE.Vector3(0, 0, 3), below = new THREE.Vector3(0, 0, -3);

  it("looks at a closed conductor's panel from outside, wherever the camera is", () => {
    expect(panelNormal(v, 0, below).toArray()).toEqual([0, 0, 1]);
    expect(panelNormal(v, 0, above).toArray()).toEqual([0, 0, 1]);
  });

  it("looks at an open sheet's panel from the camera's side", () => {
    expect(panelNormal(v, 1, above).toArray()).toEqual([0, 0, 1]);
    expect(panelNormal(v, 1, below).toArray().map((x: number) => x + 0)).toEqual([0, 0, -1]);
  });

  it("falls back to +z for a panel of no area", () => {
    expect(panelNormal(v, 2, above).toArray()).toEqual([0, 0, 1]);
  });

  it("stops 0.9 model radii out, or short of a surface in between, but never closer than 0.02 radii", () => {
    expect(flightDistance(10, undefined)).toBe(9);
    expect(flightDistance(10, 5)).toBe(3.5);
    expect(flightDistance(10, 20)).toBe(9);
    expect(flightDistance(10, 0.1)).toBe(0.2);
  });

  it("eases in and out (smoothstep)", () => {
    expect(easeFlight(0)).toBe(0);
    expect(easeFlight(1)).toBe(1);
    expect(easeFlight(0.5)).toBe(0.5);
    expect(easeFlight(0.25)).toBe(0.15625);
    expect(easeFlight(0.75)).toBe(0.84375);
  });
});
