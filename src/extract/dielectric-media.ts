/**
 * Media by containment. Each body is a closed, outward-oriented surface holding its permittivity.
 * The medium at a point is the smallest body (by enclosed volume) whose winding number there is 1,
 * else the background; so nested bodies resolve by containment.
 */
import { surfaceIndex, windingNumber, type SurfaceIndex } from "../mesh/containment.js";
import type { PreparedBody } from "./dielectric-bodies.js";

/** Containment queries over the prepared bodies (mesh/containment.ts: ray crossings through a BVH, ~log N per query). */
export class Media {
  private readonly index: SurfaceIndex[];
  constructor(private readonly bodies: PreparedBody[], private readonly background: number) {
    this.index = bodies.map((b) => surfaceIndex(b.mesh.positions, b.mesh.triangles));
  }

  /** Index of the innermost body containing the point, −1 for the background. */
  bodyAt(x: number, y: number, z: number): number {
    let best = -1, bestVolume = Infinity;
    for (let b = 0; b < this.bodies.length; b++) {
      if (this.bodies[b].volume >= bestVolume) continue;
      if (windingNumber(this.index[b], x, y, z) >= 1) { best = b; bestVolume = this.bodies[b].volume; }
    }
    return best;
  }

  /** Relative permittivity at the point. */
  at(x: number, y: number, z: number): number {
    const b = this.bodyAt(x, y, z);
    return b < 0 ? this.background : this.bodies[b].permittivity;
  }

  name(b: number): string {
    return b < 0 ? "background" : this.bodies[b].name;
  }
}
