// The HTML report in a real browser (Debian's Chromium, headless, software WebGL) and
// `sigmesh view` over HTTP. Screenshots go to tests/artifacts/ (git-ignored).
import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { spawn, type ChildProcess } from "node:child_process";
import { mkdirSync, writeFileSync, existsSync, readFileSync } from "node:fs";
import { request } from "node:http";
import { networkInterfaces } from "node:os";
import { join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import type { Browser, Page } from "playwright-core";
import {
  chromiumMissing, launchChromium, sampleExtraction, groundedExtraction, writeSampleHtml, ARTIFACTS, MARKUP_NAME, CHROMIUM, GROUNDED_TITLE,
} from "./browser-helper.js";
import type { ExtractionResult } from "../../src/extract/result.js";
import { viewerData, viewerDataJson, hotSpots, type ViewerData } from "../../src/report/viewer-data.js";
import { formatSI } from "../../src/io/si.js";
import { htmlReport } from "../../src/report/html.js";
import { sphereMesh, boxMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes, boundingBox } from "../../src/mesh/model.js";
import { EPSILON_0, AIR_BREAKDOWN_FIELD } from "../../src/extract/constants.js";

const missing = chromiumMissing();
if (missing) console.warn(`browser tests skipped: ${missing}`);
const cli = fileURLToPath(new URL("../../dist/cli/main.js", import.meta.url));

let result: ExtractionResult;
let report: Record<string, any>;
let data: ViewerData;
let htmlPath = "";
let browser: Browser | undefined;

beforeAll(async () => {
  mkdirSync(ARTIFACTS, { recursive: true });
  ({ result, report } = await sampleExtraction());
  data = viewerData(result);
  htmlPath = join(ARTIFACTS, "report.html");
  writeSampleHtml(htmlPath, report, result);
  if (!missing) browser = await launchChromium();
});
afterAll(async () => { await browser?.close(); });

/** Pixel statistics of the WebGL canvas: variance of luma and count of pixels unlike the background. */
async function canvasStats(page: Page): Promise<{ variance: number; foreground: number; pixels: number }> {
  return page.evaluate(() => {
    const c = document.getElementById("sm-canvas") as HTMLCanvasElement;
    const off = document.createElement("canvas");
    off.width = c.width; off.height = c.height;
    const g = off.getContext("2d")!;
    g.drawImage(c, 0, 0);
    const d = g.getImageData(0, 0, off.width, off.height).data;
    const bg = [d[0], d[1], d[2]];
    let s = 0, s2 = 0, fg = 0;
    const n = d.length / 4;
    for (let i = 0; i < d.length; i += 4) {
      const y = 0.2126 * d[i] + 0.7152 * d[i + 1] + 0.0722 * d[i + 2];
      s += y; s2 += y * y;
      if (Math.abs(d[i] - bg[0]) + Math.abs(d[i + 1] - bg[1]) + Math.abs(d[i + 2] - bg[2]) > 12) fg++;
    }
    return { variance: s2 / n - (s / n) ** 2, foreground: fg, pixels: n };
  });
}

async function frames(page: Page): Promise<number> {
  return Number(await page.locator(".sm-app").getAttribute("data-frames"));
}

async function afterRedraw(page: Page, before: number): Promise<void> {
  await page.waitForFunction((b) => Number(document.querySelector(".sm-app")?.getAttribute("data-frames")) > b, before, { timeout: 10_000 });
}

async function openReport(url: string, requests: string[], dialogs: string[]): Promise<Page> {
  const page = await browser!.newPage({ viewport: { width: 1280, height: 800 }, acceptDownloads: true });
  page.on("request", (r) => requests.push(r.url()));
  page.on("dialog", (d) => { dialogs.push(d.message()); void d.dismiss(); });
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await page.goto(url);
  await page.waitForSelector(".sm-app[data-ready='1']", { timeout: 30_000 });
  await page.waitForFunction(() => Number(document.querySelector(".sm-app")?.getAttribute("data-frames")) > 0);
  expect(errors).toEqual([]);
  return page;
}

/**
 * A page too large to orbit at full detail in software WebGL (82k panels: a fine sphere and a
 * coarse box). Nothing is solved, σ is made up (largest at the sphere's top): this page
 * checks drawing and picking only, never a number.
 */
function largeSyntheticPage(path: string): { panels: number; hotPanel: number } {
  const mesh = concatMeshes([
    sphereMesh({ radius: 4e-3, level: 6, center: [0, 0, 0], name: "fine sphere" }),
    boxMesh({ size: [4e-3, 4e-3, 4e-3], divisions: 6, center: [8e-3, 0, -2e-3], name: "coarse box" }),
  ]);
  const n = mesh.triangles.length / 3;
  const b = boundingBox(mesh.positions);
  const origin: [number, number, number] = [(b[0] + b[3]) / 2, (b[1] + b[4]) / 2, (b[2] + b[5]) / 2];
  const positions = Float32Array.from(mesh.positions, (x, i) => x - origin[i % 3]);
  const centroids = new Float64Array(3 * n), areas = new Float32Array(n);
  const sigma = new Float64Array(n), field = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    const [a, bb, c] = [0, 1, 2].map((j) => 3 * mesh.triangles[3 * t + j]);
    for (let i = 0; i < 3; i++) centroids[3 * t + i] = (mesh.positions[a + i] + mesh.positions[bb + i] + mesh.positions[c + i]) / 3;
    const u = [0, 1, 2].map((i) => mesh.positions[bb + i] - mesh.positions[a + i]), w = [0, 1, 2].map((i) => mesh.positions[c + i] - mesh.positions[a + i]);
    areas[t] = 0.5 * Math.hypot(u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]);
    sigma[t] = mesh.conductor[t] === 0 ? 1e-6 * (2 + centroids[3 * t + 2] / 4e-3) : -3e-7;
    field[t] = Math.abs(sigma[t]) / EPSILON_0;
  }
  const range = (x: Float64Array): [number, number] => [x.reduce((p, q) => Math.min(p, q)), x.reduce((p, q) => Math.max(p, q))];
  const spots = hotSpots(field, sigma, mesh.conductor, 2, centroids, AIR_BREAKDOWN_FIELD, 6, 1e-3);
  const data: ViewerData = {
    names: mesh.names, closed: [true, true], origin, positions, triangles: mesh.triangles, panelConductor: mesh.conductor, areas,
    breakdownField: AIR_BREAKDOWN_FIELD, permittivity: EPSILON_0,
    excitations: [{
      id: "scene", potentials: [1000, 0], sigma: Float32Array.from(sigma), field: Float32Array.from(field),
      sigmaRange: range(sigma), fieldRange: range(field), fieldMinPositive: range(field)[0], sheetFieldBound: false, hotSpots: spots,
    }],
  };
  const page = { format: "sigmesh-report/1", input: { files: ["synthetic drawing test (not solved)"], unit: "mm" }, conductors: [], fieldCheck: { cautions: [] } };
  writeFileSync(path, htmlReport(page, data));
  return { panels: n, hotPanel: spots[0].panel };
}

describe.skipIf(missing !== undefined)("HTML report in Chromium", () => {
  it("draws the conductors, shows the report's numbers, hides a conductor, keeps markup as text, flies to a hot spot", async () => {
    const requests: string[] = [], dialogs: string[] = [];
    const url = pathToFileURL(htmlPath).href;
    const page = await openReport(url, requests, dialogs);
    await page.screenshot({ path: join(ARTIFACTS, "browser-report.png") });

    // Drawn: a varied picture, not a blank canvas.
    const drawn = await canvasStats(page);
    expect(drawn.variance).toBeGreaterThan(50);
    expect(drawn.foreground).toBeGreaterThan(0.05 * drawn.pixels);

    // Colour bar: |E| linear from 0 to the largest panel field; the report's peak field (recovered
    // at a vertex on a smooth surface, peak-field.ts) lies within a few per cent below it.
    const bar = page.locator("#sm-colourbar");
    expect(await bar.getAttribute("data-quantity")).toBe("field");
    const barMax = Number(await bar.getAttribute("data-max"));
    expect(barMax).toBe(Math.max(...result.excitation.field));
    expect(report.fieldCheck.peakField).toBeLessThanOrEqual(barMax);
    expect(report.fieldCheck.peakField).toBeGreaterThan(0.95 * barMax);
    expect(Number(await bar.getAttribute("data-min"))).toBe(0);
    expect(await bar.locator("[data-role=max]").textContent()).toBe(formatSI(barMax, "V/m"));
    expect(await bar.locator("[data-role=min]").textContent()).toBe(formatSI(0, "V/m"));

    // Hot spots: the strongest is the report's peak; every conductor's peak is listed with its name.
    const spots = page.locator("#sm-hotspots button");
    const fields = (await spots.evaluateAll((bs) => bs.map((b) => Number((b as HTMLElement).dataset.field))));
    expect(fields[0]).toBe(report.fieldCheck.peakField);
    for (let i = 1; i < fields.length; i++) expect(fields[i]).toBeLessThanOrEqual(fields[i - 1]);
    const texts = await spots.allTextContents();
    for (const c of report.conductors) {
      const at = fields.indexOf(c.peakField);
      expect(at).toBeGreaterThanOrEqual(0);
      expect(texts[at]).toContain(c.name);
      expect(texts[at]).toContain(formatSI(c.peakField, "V/m"));
    }
    expect(texts[0]).toContain(report.fieldCheck.worstConductor);

    // Cautions from the report are on the page.
    const cautions = await page.locator("#sm-cautions").textContent();
    for (const c of report.fieldCheck.cautions) expect(cautions).toContain(c);

    // Markup in a name is text: no element made from it, no script run, the characters shown.
    expect(await page.locator("img").count()).toBe(0);
    expect(dialogs).toEqual([]);
    const names = await page.locator("#sm-conductor-list .sm-name").allTextContents();
    expect(names).toEqual(report.conductors.map((c: { name: string }) => c.name));
    expect(names).toContain(MARKUP_NAME);
    expect(await page.locator("#sm-maxwell th", { hasText: MARKUP_NAME }).count()).toBe(2);

    // Maxwell table cells carry the report's values.
    const cells = await page.locator("#sm-maxwell td").evaluateAll((tds) => tds.map((t) => Number((t as HTMLElement).dataset.value)));
    expect(cells).toEqual(report.capacitance.maxwell.flat());

    // Hiding the sphere removes its pixels.
    let f = await frames(page);
    await page.locator(".sm-conductor[data-conductor='0'] .sm-visible").uncheck();
    await afterRedraw(page, f);
    const hidden = await canvasStats(page);
    expect(hidden.foreground).toBeLessThan(0.85 * drawn.foreground);
    await page.screenshot({ path: join(ARTIFACTS, "browser-hidden.png") });
    f = await frames(page);
    await page.locator(".sm-conductor[data-conductor='0'] .sm-visible").check();
    await afterRedraw(page, f);
    expect(Math.abs((await canvasStats(page)).foreground - drawn.foreground)).toBeLessThan(0.01 * drawn.pixels);

    // Another excitation: the box at 1 V, its own range and hot spots.
    f = await frames(page);
    await page.locator("#sm-excitation").selectOption("2");
    await afterRedraw(page, f);
    expect(Number(await bar.getAttribute("data-max"))).toBe(data.excitations[2].fieldRange[1]);
    expect(Number(await spots.first().getAttribute("data-field"))).toBe(data.excitations[2].hotSpots[0].field);
    await page.locator("#sm-excitation").selectOption("0");

    // σ: diverging and symmetric about zero.
    await page.locator("select").first().selectOption("sigma");
    const top = Math.max(Math.abs(data.excitations[0].sigmaRange[0]), Math.abs(data.excitations[0].sigmaRange[1]));
    expect(Number(await bar.getAttribute("data-max"))).toBe(top);
    expect(Number(await bar.getAttribute("data-min"))).toBe(-top);
    await page.screenshot({ path: join(ARTIFACTS, "browser-sigma.png") });
    await page.locator("select").first().selectOption("field");

    // Clicking a hot spot flies there and pins its panel in the read-out.
    const before = await canvasStats(page);
    await spots.nth(0).click();
    await page.waitForSelector(".sm-app[data-flown='0']", { timeout: 10_000 });
    expect(await page.locator("#sm-readout").getAttribute("data-panel")).toBe(String(data.excitations[0].hotSpots[0].panel));
    expect(await page.locator("#sm-readout").textContent()).toContain(formatSI(data.excitations[0].field[data.excitations[0].hotSpots[0].panel], "V/m"));
    expect((await canvasStats(page)).foreground).not.toBe(before.foreground);
    await page.screenshot({ path: join(ARTIFACTS, "browser-hotspot.png") });

    // Snapshot downloads a PNG.
    const [download] = await Promise.all([page.waitForEvent("download"), page.locator("#sm-snapshot").click()]);
    expect(download.suggestedFilename()).toBe("sigmesh-view.png");

    // Nothing was fetched but the file itself (and in-page data: URLs).
    expect(requests.filter((r) => r !== url && !r.startsWith("data:") && !r.startsWith("blob:"))).toEqual([]);
    await page.close();
  });

  it("orbits a large model on a coarse proxy, draws the full mesh when the view rests, and picks on the full mesh", async () => {
    const path = join(ARTIFACTS, "report-large.html");
    const { panels, hotPanel } = largeSyntheticPage(path);
    const requests: string[] = [], dialogs: string[] = [];
    // A canvas of over a million pixels: while moving, software rendering draws at most 700k.
    const page = await browser!.newPage({ viewport: { width: 1600, height: 1000 } });
    // Every redraw's level of detail, and the picture of each proxy frame, taken as it is drawn.
    await page.addInitScript(() => {
      const w = window as any;
      w.__details = [];
      w.__proxyStats = null;
      new MutationObserver(() => {
        const app = document.querySelector(".sm-app") as HTMLElement | null;
        if (!app) return;
        w.__details.push(app.dataset.detail);
        if (app.dataset.detail === "proxy") w.__proxyStats = w.__stats();
      }).observe(document, { subtree: true, attributes: true, attributeFilter: ["data-frames"] });
      w.__stats = () => {
        const c = document.getElementById("sm-canvas") as HTMLCanvasElement;
        const off = document.createElement("canvas");
        off.width = c.width; off.height = c.height;
        const g = off.getContext("2d")!;
        g.drawImage(c, 0, 0);
        const d = g.getImageData(0, 0, off.width, off.height).data;
        let fg = 0, luma = 0, hash = 0;
        for (let i = 0; i < d.length; i += 4) {
          const y = 0.2126 * d[i] + 0.7152 * d[i + 1] + 0.0722 * d[i + 2];
          if (Math.abs(d[i] - d[0]) + Math.abs(d[i + 1] - d[1]) + Math.abs(d[i + 2] - d[2]) > 12) { fg++; luma += y; }
          hash = (Math.imul(hash, 31) + d[i] + 7 * d[i + 1] + 13 * d[i + 2]) | 0;
        }
        return { foreground: fg / (d.length / 4), luma: luma / Math.max(1, fg), hash, width: c.width, height: c.height };
      };
    });
    page.on("request", (r) => requests.push(r.url()));
    page.on("dialog", (d) => { dialogs.push(d.message()); void d.dismiss(); });
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    await page.goto(pathToFileURL(path).href);
    await page.waitForSelector(".sm-app[data-ready='1']", { timeout: 60_000 });
    await page.waitForSelector(".sm-app[data-proxy-panels]", { timeout: 60_000 });
    const app = page.locator(".sm-app");
    const proxyPanels = Number(await app.getAttribute("data-proxy-panels"));
    expect(proxyPanels).toBeGreaterThan(1000);
    expect(proxyPanels).toBeLessThan(0.6 * panels);
    // The first frame, drawn before the load event, is the proxy; the full mesh follows at rest.
    expect(await app.getAttribute("data-first-frame")).toBe("proxy");
    await page.waitForFunction(() => document.querySelector(".sm-app")?.getAttribute("data-detail") === "full", null, { timeout: 20_000 });
    const stat = () => page.evaluate(() => (window as any).__stats() as { foreground: number; luma: number; hash: number; width: number; height: number });
    const still = await stat();
    expect(still.foreground).toBeGreaterThan(0.05);

    // Drag to orbit: the frames drawn meanwhile are proxies, then the view rests at full detail.
    const r = await page.locator("#sm-canvas").boundingBox();
    const cx = r!.x + r!.width / 2, cy = r!.y + r!.height / 2;
    await page.evaluate(() => { (window as any).__details = []; });
    await page.mouse.move(cx - 150, cy);
    await page.mouse.down();
    for (let i = 1; i <= 15; i++) await page.mouse.move(cx - 150 + 20 * i, cy + 4 * i);
    await page.mouse.up();
    await page.waitForFunction(() => { const w = window as any; return w.__details.length > 1 && w.__details[w.__details.length - 1] === "full"; }, null, { timeout: 20_000 });
    const details: string[] = await page.evaluate(() => (window as any).__details);
    expect(details).toContain("proxy");
    expect(details[details.length - 1]).toBe("full");
    const coarse = await page.evaluate(() => (window as any).__proxyStats);
    const settled = await stat();
    // The rested frame is the full mesh at full resolution, and the proxy looked like it.
    expect(settled.width * settled.height).toBeGreaterThan(1e6);
    expect(coarse.width).toBeLessThan(settled.width);
    expect(coarse.width * coarse.height).toBeLessThanOrEqual(700000 * 1.01);
    expect(settled.foreground).toBeGreaterThan(0.05);
    expect(Math.abs(coarse.foreground - settled.foreground)).toBeLessThan(0.15 * settled.foreground);
    expect(Math.abs(coarse.luma - settled.luma)).toBeLessThan(12);
    expect(settled.hash).not.toBe(still.hash);
    await page.screenshot({ path: join(ARTIFACTS, "browser-large-orbited.png") });
    // Any other still redraw from this camera gives the very same picture.
    let f = await frames(page);
    await page.locator(".sm-conductor[data-conductor='1'] .sm-visible").uncheck();
    await afterRedraw(page, f);
    f = await frames(page);
    await page.locator(".sm-conductor[data-conductor='1'] .sm-visible").check();
    await afterRedraw(page, f);
    expect((await stat()).hash).toBe(settled.hash);

    // Fly to the strongest panel (the flight draws proxies), then pick: a click at the centre
    // of the view lands on that very panel of the full mesh; a click beside it on another.
    await page.locator("#sm-hotspots button").first().click();
    await page.waitForSelector(".sm-app[data-flown='0']", { timeout: 20_000 });
    await page.waitForFunction(() => document.querySelector(".sm-app")?.getAttribute("data-detail") === "full", null, { timeout: 20_000 });
    await page.mouse.click(cx + 80, cy + 40);
    const beside = await page.locator("#sm-readout").getAttribute("data-panel");
    expect(beside).not.toBe(String(hotPanel));
    expect(beside).not.toBe("");
    await page.mouse.click(cx, cy);
    expect(await page.locator("#sm-readout").getAttribute("data-panel")).toBe(String(hotPanel));

    expect(errors).toEqual([]);
    expect(dialogs).toEqual([]);
    expect(requests.filter((u) => u !== pathToFileURL(path).href && !u.startsWith("data:") && !u.startsWith("blob:"))).toEqual([]);
    await page.close();
  });

  it("at 1280 × 720 and 1920 × 1080: first frame before load, title, ground-plane reference, folded cautions, hot spots and matrix in view, tables that fit, slab and plane drawn and toggled", async () => {
    const { result: gr, report: grep } = await groundedExtraction();
    const path = join(ARTIFACTS, "report-grounded.html");
    writeSampleHtml(path, grep, gr);
    const page = await browser!.newPage({ viewport: { width: 1280, height: 720 } });
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    // When the page says it is ready (the microtask after its start-up, before any animation
    // frame) and at the load event itself: how many frames are drawn and what the canvas shows.
    await page.addInitScript(() => {
      new MutationObserver((_, obs) => {
        const app = document.querySelector(".sm-app");
        if (app?.getAttribute("data-ready") !== "1") return;
        (window as any).__framesAtReady = Number(app.getAttribute("data-frames") ?? 0);
        obs.disconnect();
      }).observe(document, { subtree: true, attributes: true, attributeFilter: ["data-ready"] });
      window.addEventListener("load", () => {
        const c = document.getElementById("sm-canvas") as HTMLCanvasElement | null;
        let fg = 0, n = 1;
        if (c && c.width > 0) {
          const off = document.createElement("canvas");
          off.width = c.width; off.height = c.height;
          const g = off.getContext("2d")!;
          g.drawImage(c, 0, 0);
          const d = g.getImageData(0, 0, off.width, off.height).data;
          n = d.length / 4;
          for (let i = 0; i < d.length; i += 4) if (Math.abs(d[i] - d[0]) + Math.abs(d[i + 1] - d[1]) + Math.abs(d[i + 2] - d[2]) > 12) fg++;
        }
        (window as any).__atLoad = { frames: Number(document.querySelector(".sm-app")?.getAttribute("data-frames") ?? 0), foreground: fg / n };
      });
    });
    await page.goto(pathToFileURL(path).href, { waitUntil: "load" });
    const atLoad = await page.evaluate(() => (window as any).__atLoad as { frames: number; foreground: number });
    expect(await page.evaluate(() => (window as any).__framesAtReady)).toBeGreaterThanOrEqual(1);
    expect(atLoad.frames).toBeGreaterThanOrEqual(1);
    expect(atLoad.foreground).toBeGreaterThan(0.05);
    await page.waitForSelector(".sm-app[data-ready='1']");

    // The scene's title heads the page and names the tab; the parameter is in the line below.
    expect(await page.locator("#sm-title").textContent()).toBe(GROUNDED_TITLE);
    expect(await page.title()).toBe(`${GROUNDED_TITLE} — sigmesh report`);
    expect(await page.locator(".sm-sub").textContent()).toContain("gap = 1");

    // Over a ground plane the two-terminal table names it, and nothing on the page says infinity.
    expect(await page.locator("#sm-mutual caption").textContent()).toBe("Two-terminal capacitances (circuit values); diagonal: to the ground plane");
    expect((await page.locator("body").innerText()).toLowerCase()).not.toContain("infinity");
    expect(JSON.stringify(grep).toLowerCase()).not.toContain("infinity");

    // Cautions: a folded banner whose visible line defers to standards, codes and licensed practice.
    const cautions = page.locator("#sm-cautions");
    expect(await cautions.evaluate((d) => (d as HTMLDetailsElement).open)).toBe(false);
    expect(await cautions.locator("summary").innerText()).toMatch(/standards, local codes and licensed practice/);
    expect((await cautions.boundingBox())!.height).toBeLessThan(90);

    const inView = async (selector: string, w: number, h: number): Promise<void> => {
      const b = (await page.locator(selector).first().boundingBox())!;
      expect(b.y, selector).toBeGreaterThanOrEqual(0);
      expect(b.y + b.height, `${selector} bottom at ${w} × ${h}`).toBeLessThanOrEqual(h);
      expect(b.x + b.width, selector).toBeLessThanOrEqual(w);
    };
    for (const [w, h] of [[1280, 720], [1920, 1080]]) {
      await page.setViewportSize({ width: w, height: h });
      await inView("#sm-hotspots", w, h);
      await inView("#sm-hotspots button", w, h);
      await inView("#sm-maxwell", w, h);
      // The conductor tables: no cell cut, headings on at most two lines, nothing wider than the panel.
      const fit = await page.evaluate(() => {
        const side = document.querySelector(".sm-side") as HTMLElement;
        const cut: string[] = [];
        let tallest = 0;
        for (const t of ["#sm-summary", "#sm-mesh"]) {
          for (const c of document.querySelectorAll(`${t} th, ${t} td`)) {
            const e = c as HTMLElement;
            if (e.scrollWidth > e.clientWidth) cut.push(e.textContent ?? "");
            if (e.tagName === "TH") {
              const cs = getComputedStyle(e);
              const lines = (e.clientHeight - parseFloat(cs.paddingTop) - parseFloat(cs.paddingBottom)) / parseFloat(cs.lineHeight);
              tallest = Math.max(tallest, lines);
            }
          }
        }
        const right = side.getBoundingClientRect().right;
        const tables = ["#sm-summary", "#sm-mesh"].map((t) => document.querySelector(t)!.getBoundingClientRect().right);
        return { cut, tallest, sideScroll: side.scrollWidth - side.clientWidth, overhang: Math.max(...tables) - right };
      });
      expect(fit.cut).toEqual([]);
      expect(fit.tallest).toBeGreaterThan(0.9);
      expect(fit.tallest).toBeLessThan(2.1);
      expect(fit.sideScroll).toBeLessThanOrEqual(0);
      expect(fit.overhang).toBeLessThanOrEqual(0);
      expect(await page.locator("#sm-mesh th").allTextContents()).toEqual(["conductor", "area", "input triangles", "solved panels"]);
      await page.screenshot({ path: join(ARTIFACTS, `browser-grounded-${w}.png`) });
    }
    // The solved panels per conductor add up to the panels drawn.
    const solved = (await page.locator("#sm-mesh td:nth-child(4)").allTextContents()).map(Number);
    expect(solved.reduce((a, b) => a + b, 0)).toBe(gr.panelConductor.length);
    expect((await page.locator("#sm-mesh td:nth-child(3)").allTextContents()).map(Number)).toEqual(gr.conductors.map((c) => c.triangles));

    // Opened, every caution is there in full.
    await cautions.locator("summary").click();
    for (const c of grep.fieldCheck.cautions) await expect(cautions.locator("li", { hasText: c }).isVisible()).resolves.toBe(true);

    // The slab and the ground plane: named rows that show and hide them.
    const rows = page.locator("#sm-surroundings .sm-body");
    expect(await rows.locator(".sm-name").allTextContents()).toEqual(["slab (εr = 4.000)", "ground plane z = -13.00 mm"]);
    const shown = await canvasStats(page);
    let f = await frames(page);
    await rows.nth(1).locator(".sm-visible").uncheck();
    await afterRedraw(page, f);
    const noPlane = await canvasStats(page);
    expect(noPlane.foreground).toBeLessThan(shown.foreground - 0.02 * shown.pixels);
    f = await frames(page);
    await rows.nth(0).locator(".sm-visible").uncheck();
    await afterRedraw(page, f);
    expect((await canvasStats(page)).foreground).toBeLessThan(noPlane.foreground);
    expect(errors).toEqual([]);
    await page.close();

    // The literal check: Chromium's own headless screenshot, taken as the page loads, shows the model.
    const png = join(ARTIFACTS, "chromium-screenshot.png");
    await new Promise<void>((resolve, reject) => {
      const child = spawn(CHROMIUM, ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
        "--no-first-run", "--use-angle=swiftshader", "--enable-unsafe-swiftshader", "--window-size=1280,720", `--screenshot=${png}`, pathToFileURL(path).href],
      { stdio: "ignore" });
      child.on("exit", (code) => (code === 0 ? resolve() : reject(new Error(`chromium --screenshot exited ${code}`))));
    });
    const viewer = await browser!.newPage({ viewport: { width: 1280, height: 720 } });
    await viewer.setContent(`<img id="shot" src="data:image/png;base64,${readFileSync(png).toString("base64")}">`);
    const stageShare = await viewer.evaluate(async () => {
      const img = document.getElementById("shot") as HTMLImageElement;
      await img.decode();
      const c = document.createElement("canvas");
      c.width = img.naturalWidth; c.height = img.naturalHeight;
      const g = c.getContext("2d")!;
      g.drawImage(img, 0, 0);
      // The stage right of the colour bar and below the header: pixels unlike the page's paper colour.
      const x0 = 200, x1 = Math.floor(0.6 * c.width), y0 = 80, y1 = c.height - 60;
      const d = g.getImageData(x0, y0, x1 - x0, y1 - y0).data;
      let fg = 0;
      for (let i = 0; i < d.length; i += 4) if (Math.abs(d[i] - 0xf4) + Math.abs(d[i + 1] - 0xf1) + Math.abs(d[i + 2] - 0xea) > 24) fg++;
      return fg / (d.length / 4);
    });
    expect(stageShare).toBeGreaterThan(0.05);
    await viewer.close();
  }, 120_000);

  it("draws mesh edges without building lines, and the same picture again without them", async () => {
    const page = await openReport(pathToFileURL(htmlPath).href, [], []);
    const plain = await canvasStats(page);
    let f = await frames(page);
    await page.locator("#sm-edges").check();
    await afterRedraw(page, f);
    const edged = await canvasStats(page);
    await page.screenshot({ path: join(ARTIFACTS, "browser-edges.png") });
    // Dark lines over the panels: the same silhouette, a darker and more varied picture.
    expect(Math.abs(edged.foreground - plain.foreground)).toBeLessThan(0.01 * plain.pixels);
    expect(edged.variance).toBeGreaterThan(plain.variance);
    f = await frames(page);
    await page.locator("#sm-edges").uncheck();
    await afterRedraw(page, f);
    const again = await canvasStats(page);
    expect(again.variance).toBeCloseTo(plain.variance, 6);
    expect(again.foreground).toBe(plain.foreground);
    await page.close();
  });

  it("says plainly when WebGL is missing and still shows the tables", async () => {
    const page = await browser!.newPage({ viewport: { width: 1000, height: 700 } });
    await page.addInitScript(() => {
      const orig = HTMLCanvasElement.prototype.getContext;
      (HTMLCanvasElement.prototype as any).getContext = function (this: HTMLCanvasElement, kind: string, ...rest: unknown[]) {
        return /webgl/.test(kind) ? null : (orig as any).call(this, kind, ...rest);
      };
    });
    await page.goto(pathToFileURL(htmlPath).href);
    await page.waitForSelector(".sm-app[data-ready='1']", { timeout: 30_000 });
    expect(await page.locator("#sm-glnote").getAttribute("data-kind")).toBe("missing");
    expect(await page.locator("#sm-glnote").textContent()).toMatch(/WebGL is not available/);
    expect(await page.locator("#sm-maxwell td").count()).toBe(9);
    expect(await page.locator("#sm-hotspots button").count()).toBeGreaterThan(0);
    await page.screenshot({ path: join(ARTIFACTS, "browser-no-webgl.png") });
    await page.close();
  });
});

// ---- sigmesh view ----

function get(port: number, path: string, method = "GET", host = "127.0.0.1"): Promise<{ status: number; body: string; type: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host, port, path, method }, (res) => {
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (c) => { body += c; });
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body, type: String(res.headers["content-type"] ?? "") }));
    });
    req.on("error", reject);
    req.end();
  });
}

function startView(args: string[]): Promise<{ child: ChildProcess; url: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [cli, "view", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let out = "", err = "";
    child.stdout!.on("data", (c) => {
      out += c;
      const m = /(http:\/\/127\.0\.0\.1:\d+\/\S*)/.exec(out);
      if (m) resolve({ child, url: m[1] });
    });
    child.stderr!.on("data", (c) => { err += c; });
    child.on("exit", (code) => reject(new Error(`sigmesh view exited ${code}: ${err}`)));
  });
}

function stop(child: ChildProcess): Promise<number | null> {
  return new Promise((resolve) => { child.once("exit", (code) => resolve(code)); child.kill("SIGINT"); });
}

describe("sigmesh view", () => {
  it("serves the page and the report on 127.0.0.1 only, under its token only, and nothing else", async () => {
    expect(existsSync(cli), "dist/cli/main.js missing: run `npm run build` first").toBe(true);
    const { child, url } = await startView([htmlPath]);
    try {
      const port = Number(new URL(url).port);
      const base = new URL(url).pathname;
      const page = await get(port, base);
      expect(page.status).toBe(200);
      expect(page.type).toMatch(/^text\/html/);
      expect(page.body).toContain('id="sigmesh-data"');
      const json = await get(port, base + "report.json");
      expect(json.status).toBe(200);
      expect(JSON.parse(json.body).fieldCheck.peakField).toBe(report.fieldCheck.peakField);
      for (const p of ["../etc/passwd", "..%2f..%2fetc%2fpasswd", "%2e%2e/etc/passwd", "/etc/passwd", "dist/", "viewer.js", "report.html", "favicon.ico", "index.html/.."]) {
        const r = await get(port, base + p);
        expect(r.status, p).toBe(404);
        expect(r.body).not.toContain("root:");
        // without the token: refused before any path is looked at
        expect((await get(port, "/" + p)).status, p).toBe(403);
      }
      expect((await get(port, "/")).status).toBe(403);
      expect((await get(port, base, "POST")).status).toBe(405);
      // Bound to the loopback address: another interface of this machine refuses.
      const other = Object.values(networkInterfaces()).flat().find((a) => a && a.family === "IPv4" && !a.internal);
      if (other) await expect(get(port, "/", "GET", other.address)).rejects.toThrow();
    } finally {
      expect(await stop(child)).toBe(0);
    }
  });

  it("serves a JSON report carrying panel data, and the page works in the browser", async () => {
    const jsonPath = join(ARTIFACTS, "report-panels.json");
    writeFileSync(jsonPath, JSON.stringify({ ...report, viewer: viewerDataJson(result) }));
    const { child, url } = await startView([jsonPath, "--port", "0"]);
    try {
      expect((await get(Number(new URL(url).port), new URL(url).pathname + "report.json")).body).not.toContain('"viewer"');
      if (browser) {
        const requests: string[] = [], dialogs: string[] = [];
        const page = await openReport(url, requests, dialogs);
        expect(Number(await page.locator("#sm-colourbar").getAttribute("data-max"))).toBe(Math.max(...result.excitation.field));
        expect(requests.filter((r) => r !== url && !r.startsWith("data:") && !r.startsWith("blob:"))).toEqual([]);
        await page.close();
      }
    } finally {
      await stop(child);
    }
  });

  it("refuses a report without panel data with one line and exit 2", async () => {
    const bare = join(ARTIFACTS, "report-bare.json");
    writeFileSync(bare, JSON.stringify(report));
    const r = await new Promise<{ code: number | null; err: string }>((resolve) => {
      const child = spawn(process.execPath, [cli, "view", bare], { stdio: ["ignore", "pipe", "pipe"] });
      let err = "";
      child.stderr!.on("data", (c) => { err += c; });
      child.on("exit", (code) => resolve({ code, err }));
    });
    expect(r.code).toBe(2);
    expect(r.err.trim().split("\n")).toHaveLength(1);
    expect(r.err).toMatch(/report-bare\.json: .*--json-panels/);
  });
});
