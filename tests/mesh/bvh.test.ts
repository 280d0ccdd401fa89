import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { buildBoxTree, triangleBoxes, forEachItemInBox, nearestItem, nodeLabels, forEachOverlappingPair } from "../../src/mesh/bvh.js";
import { closestPointTriangle } from "../../src/geometry/closest-point.js";

// Coordinates on a 1/100 grid: metre-scale meshes never meet the subnormal numbers free doubles shrink to.
const coord = fc.integer({ min: -500, max: 500 }).map((k) => k / 100);
/** A soup of 1..120 random triangles, each near a random centre with a random size. */
const soup = fc.array(fc.tuple(coord, coord, coord, fc.integer({ min: 1, max: 200 }).map((k) => k / 100), fc.array(fc.integer({ min: -100, max: 100 }).map((k) => k / 100), { minLength: 9, maxLength: 9 })), { minLength: 1, maxLength: 120 })
  .map((items) => {
    const p = new Float64Array(9 * items.length), t = new Uint32Array(3 * items.length);
    items.forEach(([x, y, z, s, d], i) => {
      for (let k = 0; k < 3; k++) { p[9 * i + 3 * k] = x + s * d[3 * k]; p[9 * i + 3 * k + 1] = y + s * d[3 * k + 1]; p[9 * i + 3 * k + 2] = z + s * d[3 * k + 2]; }
      t[3 * i] = 3 * i; t[3 * i + 1] = 3 * i + 1; t[3 * i + 2] = 3 * i + 2;
    });
    return { p, t };
  });

function overlap(a: Float64Array, i: number, b: Float64Array, j: number): boolean {
  return a[i] <= b[j + 3] && b[j] <= a[i + 3] && a[i + 1] <= b[j + 4] && b[j + 1] <= a[i + 4] && a[i + 2] <= b[j + 5] && b[j + 2] <= a[i + 5];
}

describe("BVH over triangle boxes", () => {
  it("holds every item once, and each node box contains its items", () => {
    fc.assert(fc.property(soup, fc.integer({ min: 1, max: 8 }), ({ p, t }, leaf) => {
      const boxes = triangleBoxes(p, t);
      const tree = buildBoxTree(boxes, leaf);
      const n = t.length / 3;
      if ([...tree.order].sort((a, b) => a - b).some((v, i) => v !== i)) return false;
      for (let node = 0; node < tree.nodeCount; node++) {
        for (let k = tree.start[node]; k < tree.start[node] + tree.count[node]; k++) {
          const i = tree.order[k];
          for (let a = 0; a < 3; a++) if (boxes[6 * i + a] < tree.bounds[6 * node + a] || boxes[6 * i + 3 + a] > tree.bounds[6 * node + 3 + a]) return false;
        }
        if (tree.left[node] < 0 && tree.count[node] > leaf) return false;
      }
      return tree.nodeCount <= 2 * n - 1;
    }), { numRuns: 100 });
  });

  it("box queries find exactly the brute-force overlaps", () => {
    fc.assert(fc.property(soup, fc.array(coord, { minLength: 6, maxLength: 6 }), ({ p, t }, q) => {
      const box = new Float64Array([Math.min(q[0], q[3]), Math.min(q[1], q[4]), Math.min(q[2], q[5]), Math.max(q[0], q[3]), Math.max(q[1], q[4]), Math.max(q[2], q[5])]);
      const boxes = triangleBoxes(p, t);
      const tree = buildBoxTree(boxes, 3);
      const got: number[] = [];
      forEachItemInBox(tree, box, (i) => got.push(i));
      const want: number[] = [];
      for (let i = 0; i < t.length / 3; i++) if (overlap(boxes, 6 * i, box, 0)) want.push(i);
      expect(got.sort((a, b) => a - b)).toEqual(want);
    }), { numRuns: 200 });
  });

  it("nearest-triangle queries match brute force", () => {
    const cp = new Float64Array(3);
    fc.assert(fc.property(soup, coord, coord, coord, ({ p, t }, x, y, z) => {
      const tree = buildBoxTree(triangleBoxes(p, t), 4);
      const d2 = (i: number) => {
        const a = 3 * t[3 * i], b = 3 * t[3 * i + 1], c = 3 * t[3 * i + 2];
        return closestPointTriangle(cp, x, y, z, p[a], p[a + 1], p[a + 2], p[b], p[b + 1], p[b + 2], p[c], p[c + 1], p[c + 2]);
      };
      let best = Infinity;
      for (let i = 0; i < t.length / 3; i++) best = Math.min(best, d2(i));
      const r = nearestItem(tree, x, y, z, d2);
      expect(r.distance).toBeCloseTo(Math.sqrt(best), 12);
      expect(d2(r.item)).toBe(best);
    }), { numRuns: 200 });
  });

  it("self-pair traversal reports each overlapping pair once, honouring labels", () => {
    fc.assert(fc.property(soup, fc.integer({ min: 1, max: 3 }), ({ p, t }, groups) => {
      const n = t.length / 3;
      const boxes = triangleBoxes(p, t);
      const tree = buildBoxTree(boxes, 2);
      const label = new Uint32Array(n).map((_, i) => (i * 7) % groups);
      for (const withLabels of [false, true]) {
        const got = new Set<string>();
        let calls = 0;
        forEachOverlappingPair(tree, (i, j) => { calls++; got.add(i < j ? `${i},${j}` : `${j},${i}`); }, withLabels ? { item: label, node: nodeLabels(tree, label) } : undefined);
        const want = new Set<string>();
        for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) {
          if (withLabels && label[i] === label[j]) continue;
          if (overlap(boxes, 6 * i, boxes, 6 * j)) want.add(`${i},${j}`);
        }
        expect(calls).toBe(want.size);
        expect([...got].sort()).toEqual([...want].sort());
      }
    }), { numRuns: 150 });
  });

  it("handles an empty tree", () => {
    const tree = buildBoxTree(new Float64Array(0));
    let calls = 0;
    forEachItemInBox(tree, new Float64Array([0, 0, 0, 1, 1, 1]), () => calls++);
    forEachOverlappingPair(tree, () => calls++);
    expect(calls).toBe(0);
    expect(nearestItem(tree, 0, 0, 0, () => 0).item).toBe(-1);
  });
});
