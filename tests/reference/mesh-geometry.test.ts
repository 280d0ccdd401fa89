// Generated meshes against closed-form areas and volumes. The polyhedral values converge
// to the smooth ones at second order in the panel size (the chord of an arc of angle theta
// misses it by R theta^2 / 8 — elementary geometry), which is what these checks measure.
import { describe, it, expect } from "vitest";
import { sphereMesh, boxMesh, plateMesh, diskMesh, cylinderMesh, torusMesh, barMesh, diskLayout } from "../../src/mesh/primitives/index.js";
import { surfaceArea, signedVolume } from "../../src/mesh/measure.js";

/** Observed order of convergence from errors at panel sizes h and h/2. */
const order = (coarse: number, fine: number): number => Math.log2(Math.abs(coarse) / Math.abs(fine));

describe("sphere", () => {
  it("area tends to 4 pi R^2 at second order (levels 2..5), volume to 4/3 pi R^3", () => {
    // Source: surface area and volume of a sphere, Archimedes (On the Sphere and Cylinder); any geometry handbook.
    const R = 1.5;
    const areaErr: number[] = [], volErr: number[] = [];
    for (const L of [2, 3, 4, 5]) {
      const m = sphereMesh({ radius: R, level: L });
      areaErr.push(4 * Math.PI * R * R - surfaceArea(m));
      volErr.push((4 / 3) * Math.PI * R ** 3 - signedVolume(m));
    }
    for (let i = 0; i + 1 < areaErr.length; i++) {
      expect(areaErr[i]).toBeGreaterThan(0); // an inscribed polyhedron has less area
      const p = order(areaErr[i], areaErr[i + 1]);
      expect(p).toBeGreaterThan(1.9);
      expect(p).toBeLessThan(2.1);
      const q = order(volErr[i], volErr[i + 1]);
      expect(q).toBeGreaterThan(1.9);
      expect(q).toBeLessThan(2.1);
    }
    expect(Math.abs(areaErr[3]) / (4 * Math.PI * R * R)).toBeLessThan(1e-3);
  });
});

describe("box, bar and plate", () => {
  it("box area 2(ab + bc + ca) and volume abc to 1e-12, with and without grading", () => {
    // Source: closed form for a rectangular cuboid.
    const [a, b, c] = [0.3, 1.7, 2.9];
    for (const grading of [1, 2.5, 10]) {
      for (const divisions of [1, 4, 7]) {
        const m = boxMesh({ size: [a, b, c], divisions, grading, center: [5, -3, 2] });
        expect(Math.abs(surfaceArea(m) / (2 * (a * b + b * c + c * a)) - 1)).toBeLessThan(1e-12);
        expect(Math.abs(signedVolume(m) / (a * b * c) - 1)).toBeLessThan(1e-12);
      }
    }
  });
  it("bar (trace) area and volume exact", () => {
    const m = barMesh({ length: 20e-3, width: 0.2e-3, thickness: 35e-6, grading: 3 });
    const [l, w, t] = [20e-3, 0.2e-3, 35e-6];
    expect(Math.abs(surfaceArea(m) / (2 * (l * w + w * t + t * l)) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(signedVolume(m) / (l * w * t) - 1)).toBeLessThan(1e-12);
  });
  it("plate area exact", () => {
    const m = plateMesh({ size: [3e-3, 7e-3], divisions: [5, 9], grading: 6 });
    expect(Math.abs(surfaceArea(m) / 21e-6 - 1)).toBeLessThan(1e-12);
  });
});

describe("disk", () => {
  it("area is that of its rim polygon, (m/2) R^2 sin(2 pi/m), and tends to pi R^2 at second order", () => {
    // Source: area of a regular m-gon inscribed in a circle of radius R, (m/2) R^2 sin(2 pi/m) (closed form).
    const R = 2;
    const errs: number[] = [], ms: number[] = [];
    for (const rings of [4, 8, 16, 32]) {
      const m = diskMesh({ radius: R, divisions: rings });
      const segs = diskLayout(R, rings).segments;
      const rim = segs[segs.length - 1];
      const polygon = 0.5 * rim * R * R * Math.sin((2 * Math.PI) / rim);
      expect(Math.abs(surfaceArea(m) / polygon - 1)).toBeLessThan(1e-12);
      errs.push(Math.PI * R * R - surfaceArea(m));
      ms.push(rim);
    }
    // Uniform rings have 6k segments, so the rim count doubles with the ring count.
    for (let i = 0; i + 1 < errs.length; i++) {
      const p = Math.log(errs[i] / errs[i + 1]) / Math.log(ms[i + 1] / ms[i]);
      expect(p).toBeGreaterThan(1.9);
      expect(p).toBeLessThan(2.1);
    }
  });
});

describe("torus (Pappus's centroid theorems)", () => {
  it("area 4 pi^2 R r and volume 2 pi^2 R r^2, converging at second order", () => {
    // Source: Pappus's first and second centroid theorems (surface and solid of revolution of a circle).
    const R = 3, r = 1;
    const area = 4 * Math.PI ** 2 * R * r, vol = 2 * Math.PI ** 2 * R * r * r;
    const ae: number[] = [], ve: number[] = [];
    for (const n of [16, 32, 64, 128]) {
      const m = torusMesh({ majorRadius: R, minorRadius: r, divisions: [n, n / 2] });
      ae.push(area - surfaceArea(m));
      ve.push(vol - signedVolume(m));
    }
    for (let i = 0; i + 1 < ae.length; i++) {
      expect(order(ae[i], ae[i + 1])).toBeGreaterThan(1.9);
      expect(order(ae[i], ae[i + 1])).toBeLessThan(2.1);
      expect(order(ve[i], ve[i + 1])).toBeGreaterThan(1.9);
      expect(order(ve[i], ve[i + 1])).toBeLessThan(2.1);
    }
    expect(Math.abs(ae[3] / area)).toBeLessThan(1e-3);
  });
});

describe("cylinder", () => {
  it("area 2 pi R h + 2 pi R^2 and volume pi R^2 h, converging at second order", () => {
    // Source: closed form for a right circular cylinder.
    const R = 0.5, h = 2;
    const area = 2 * Math.PI * R * h + 2 * Math.PI * R * R, vol = Math.PI * R * R * h;
    const ae: number[] = [], ve: number[] = [];
    for (const n of [12, 24, 48, 96]) {
      for (const grading of [1, 3]) {
        const m = cylinderMesh({ radius: R, height: h, divisions: n, grading });
        // Exactly the prism on the rim polygon: its area and volume follow from the polygon.
        const poly = 0.5 * n * R * R * Math.sin((2 * Math.PI) / n), perim = 2 * n * R * Math.sin(Math.PI / n);
        expect(Math.abs(surfaceArea(m) / (2 * poly + perim * h) - 1)).toBeLessThan(1e-12);
        expect(Math.abs(signedVolume(m) / (poly * h) - 1)).toBeLessThan(1e-12);
        if (grading === 1) { ae.push(area - surfaceArea(m)); ve.push(vol - signedVolume(m)); }
      }
    }
    for (let i = 0; i + 1 < ae.length; i++) {
      expect(order(ae[i], ae[i + 1])).toBeGreaterThan(1.9);
      expect(order(ae[i], ae[i + 1])).toBeLessThan(2.1);
      expect(order(ve[i], ve[i + 1])).toBeGreaterThan(1.9);
      expect(order(ve[i], ve[i + 1])).toBeLessThan(2.1);
    }
  });
});
