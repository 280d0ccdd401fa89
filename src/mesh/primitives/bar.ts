/**
 * Rectangular bar or trace: a long box whose divisions follow from a target panel size.
 * The thickness is along z when the bar runs along x or y (a trace on a board in the xy
 * plane); a bar along z (a pin) has its width along x and thickness along y.
 */
import type { SurfaceMesh } from "../model.js";
import { boxMesh } from "./box.js";
import type { Axis } from "./placement.js";

export interface BarParams {
  /** Length along `axis`; metres. */
  length: number;
  /** Width across the axis; metres. */
  width: number;
  /** Thickness; metres. */
  thickness: number;
  /** Target panel edge length; metres. Default a quarter of the width. */
  panelSize?: number;
  /** Divisions along length, width and thickness (overrides panelSize). */
  divisions?: readonly number[];
  /** Largest / smallest spacing along each side, toward the edges; 1 = uniform. */
  grading?: number;
  /** Direction of the length (default x). */
  axis?: Axis;
  /** Centre; metres. */
  center?: readonly number[];
  name?: string;
}

export function barMesh(params: BarParams): SurfaceMesh {
  const { length: l, width: w, thickness: t } = params;
  if (![l, w, t].every((x) => x > 0 && Number.isFinite(x))) throw new RangeError("barMesh: length, width and thickness must be positive");
  const axis = params.axis ?? "x";
  const size = axis === "x" ? [l, w, t] : axis === "y" ? [w, l, t] : [w, t, l];
  let divisions: number[] | undefined;
  if (params.divisions !== undefined) {
    const [dl, dw, dt] = params.divisions;
    divisions = axis === "x" ? [dl, dw, dt] : axis === "y" ? [dw, dl, dt] : [dw, dt, dl];
  }
  const panelSize = divisions === undefined ? (params.panelSize ?? w / 4) : undefined;
  return boxMesh({ size, divisions, panelSize, grading: params.grading, center: params.center, name: params.name ?? "bar" });
}
