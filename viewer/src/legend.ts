/**
 * The colour bar beside the view (its gradient, title and tick labels, from colour-scale.ts)
 * and the saved picture, which carries the bar so that it carries its scale.
 */
import { el } from "./dom.js";
import { LUT_SIZE } from "./colormap.js";
import { barTicks, barTitle, fillBarPixels, type ColourScale } from "./colour-scale.js";
import type { ColourBarElements } from "./panels.js";

export function drawColourBar(b: ColourBarElements, s: ColourScale, lut: Uint8Array): void {
  const ctx = b.gradient.getContext("2d");
  if (ctx) {
    const img = ctx.createImageData(1, LUT_SIZE);
    fillBarPixels(img.data, lut);
    ctx.putImageData(img, 0, 0);
  }
  b.title.textContent = barTitle(s);
  b.bar.dataset.quantity = s.quantity;
  b.bar.dataset.scale = s.scale;
  b.bar.dataset.min = String(s.lo);
  b.bar.dataset.max = String(s.hi);
  b.labels.replaceChildren();
  for (const [at, text, role] of barTicks(s)) {
    const t = el("span", "sm-tick", text);
    t.style.top = `${at * 100}%`;
    t.dataset.role = role;
    b.labels.appendChild(t);
  }
}

/** Downloads the drawn view (the canvas as it is now) with the colour bar on it, as a PNG. */
export function saveSnapshot(canvas: HTMLCanvasElement, b: ColourBarElements): void {
  const out = document.createElement("canvas");
  out.width = canvas.width; out.height = canvas.height;
  const g = out.getContext("2d");
  if (!g) return;
  g.drawImage(canvas, 0, 0);
  const dpr = canvas.width / Math.max(1, canvas.clientWidth);
  const bx = 16 * dpr, by = 40 * dpr, bw = 16 * dpr, bh = Math.min(out.height - 80 * dpr, 256 * dpr);
  g.imageSmoothingEnabled = true;
  g.drawImage(b.gradient, bx, by, bw, bh);
  g.fillStyle = "#222"; g.font = `${12 * dpr}px sans-serif`; g.textBaseline = "middle";
  g.fillText(b.title.textContent ?? "", bx, by - 14 * dpr);
  for (const t of Array.from(b.labels.children) as HTMLElement[]) g.fillText(t.textContent ?? "", bx + bw + 6 * dpr, by + (parseFloat(t.style.top) / 100) * bh);
  const a = document.createElement("a");
  a.href = out.toDataURL("image/png");
  a.download = "sigmesh-view.png";
  a.click();
}
