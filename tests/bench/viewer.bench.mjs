// Viewer benchmark: does the HTML report stay interactive at 300k panels (issue 6)?
// For each size a four-conductor scene is built WITHOUT solving (a solve of that size takes
// minutes): σ per panel is a made-up smooth function with edge enhancement, |E| = |σ|/ε0.
// The numbers on the page are therefore meaningless; only the rendering speed is measured.
// The page is opened in Debian's Chromium (headless, SwiftShader software WebGL) and timed:
// first frame, still redraws, frames while orbiting (the view draws proxies then), the
// full-detail frame after the drag, excitation / colour-mode switches, hover pick, mesh edges.
// Figures are printed, not asserted; the machine is shared, so compare sizes within one run.
//   node tests/bench/viewer.bench.mjs [panels,panels,...] [WIDTHxHEIGHT]   (default 30000,100000,300000, 1280x800)
//   SIGMESH_VIEWER_BUNDLE=dir   times another build of the viewer (viewer.js, viewer.css in dir)
import { mkdtempSync, mkdirSync, readFileSync, writeFileSync, rmSync, statSync, existsSync } from "node:fs";
import { tmpdir, loadavg, cpus, platform, release } from "node:os";
import { join } from "node:path";
import { pathToFileURL, fileURLToPath } from "node:url";
import { sphereMesh, boxMesh, plateMesh } from "../../dist/src/mesh/primitives/index.js";
import { concatMeshes, boundingBox } from "../../dist/src/mesh/model.js";
import { htmlReport } from "../../dist/src/report/html.js";
import { hotSpots } from "../../dist/src/report/viewer-data.js";
import { cautionsFor } from "../../dist/src/report/cautions.js";
import { EPSILON_0, AIR_BREAKDOWN_FIELD } from "../../dist/src/extract/constants.js";

const CHROMIUM = process.env.SIGMESH_CHROMIUM ?? "/usr/bin/chromium";
const targets = (process.argv[2] ?? "30000,100000,300000").split(",").map(Number);
const [vw, vh] = (process.argv[3] ?? "1280x800").split("x").map(Number);
const c0 = cpus();
const loads = () => loadavg().map((x) => x.toFixed(2)).join(" ");
console.log(`machine: ${c0.length} x ${c0[0]?.model ?? "unknown CPU"}, ${platform()} ${release()}, Node ${process.version}`);
console.log(`load average at start: ${loads()}`);
console.log("DATA ARE SYNTHETIC: σ is a made-up smooth function (edge-enhanced), |E| = |σ|/ε0, nothing is solved; only the viewer's rendering speed is measured.");
// SIGMESH_VIEWER_BUNDLE=dir: time another build of the viewer.
const bundleDir = process.env.SIGMESH_VIEWER_BUNDLE;
const bundle = bundleDir ? { script: readFileSync(join(bundleDir, "viewer.js"), "utf8"), css: existsSync(join(bundleDir, "viewer.css")) ? readFileSync(join(bundleDir, "viewer.css"), "utf8") : "" } : undefined;
if (bundleDir) console.log(`viewer bundle from ${bundleDir}`);

function stats(xs) {
  const s = Float64Array.from(xs).sort();
  const q = (f) => s[Math.min(s.length - 1, Math.floor(f * s.length))];
  const mean = s.reduce((a, b) => a + b, 0) / Math.max(1, s.length);
  return { n: s.length, mean, median: q(0.5), p90: q(0.9), max: s[s.length - 1] ?? NaN };
}
const ms = (x) => `${x.toFixed(1)} ms`;
const line = (label, st) => console.log(`${label.padEnd(44)} n=${String(st.n).padStart(3)}  median ${ms(st.median).padStart(9)}  mean ${ms(st.mean).padStart(9)}  p90 ${ms(st.p90).padStart(9)}  max ${ms(st.max).padStart(9)}`);

if (!existsSync(CHROMIUM)) {
  console.log(`no Chromium at ${CHROMIUM} (install Debian's chromium package, or set SIGMESH_CHROMIUM): browser figures skipped`);
  process.exit(0);
}
const { chromium } = await import("playwright-core");
const browser = await chromium.launch({
  executablePath: CHROMIUM,
  headless: true,
  args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--no-first-run", "--use-angle=swiftshader", "--enable-unsafe-swiftshader"],
});

/** Builds the synthetic scene of about `target` panels, opens its report and times it; returns the headline figures. */
async function benchSize(target) {
  // ---- Scene: two icospheres, a box (sharp edges), an open plate; sizes chosen to reach `target` panels ----
  // Level-L icosphere: 20·4^L panels; box with d divisions per side: 12·d²; plate n×n: 2·n².
  const sphereLevel = target >= 150000 ? 6 : target >= 40000 ? 5 : 4;
  const spherePanels = 20 * 4 ** sphereLevel;
  const boxDiv = Math.max(2, Math.floor(Math.sqrt(Math.max(0, target - 2 * spherePanels) * 0.88 / 12)));
  const platePanels = Math.max(2, target - 2 * spherePanels - 12 * boxDiv * boxDiv);
  const plateDiv = Math.max(1, Math.round(Math.sqrt(platePanels / 2)));
  const parts = [
    { mesh: sphereMesh({ radius: 4e-3, level: sphereLevel, center: [-9e-3, 0, 0], name: "HV electrode" }), kind: "sphere", centre: [-9e-3, 0, 0], size: 4e-3 },
    { mesh: sphereMesh({ radius: 3e-3, level: sphereLevel, center: [0, 8e-3, 2e-3], name: "guard sphere" }), kind: "sphere", centre: [0, 8e-3, 2e-3], size: 3e-3 },
    { mesh: boxMesh({ size: [6e-3, 6e-3, 6e-3], divisions: boxDiv, center: [6e-3, 0, 0], name: "ground box" }), kind: "box", centre: [6e-3, 0, 0], size: 3e-3 },
    { mesh: plateMesh({ size: [24e-3, 18e-3], divisions: plateDiv, center: [0, 0, -8e-3], name: "shield sheet" }), kind: "plate", centre: [0, 0, -8e-3], size: [12e-3, 9e-3] },
  ];
  const tBuild = performance.now();
  const mesh = concatMeshes(parts.map((p) => p.mesh));
  const n = mesh.triangles.length / 3;
  const k = parts.length;
  const names = mesh.names.slice();
  const closed = parts.map((p) => p.kind !== "plate");

  const centroids = new Float64Array(3 * n);
  const areas = new Float32Array(n);
  for (let t = 0; t < n; t++) {
    const a = 3 * mesh.triangles[3 * t], b = 3 * mesh.triangles[3 * t + 1], c = 3 * mesh.triangles[3 * t + 2];
    const P = mesh.positions;
    for (let i = 0; i < 3; i++) centroids[3 * t + i] = (P[a + i] + P[b + i] + P[c + i]) / 3;
    const ux = P[b] - P[a], uy = P[b + 1] - P[a + 1], uz = P[b + 2] - P[a + 2];
    const vx = P[c] - P[a], vy = P[c + 1] - P[a + 1], vz = P[c + 2] - P[a + 2];
    areas[t] = 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
  }

  /** Made-up edge enhancement ≥ 1 of panel t of conductor c (shaped like, not equal to, the edge singularities). */
  function edgeFactor(c, t) {
    const p = parts[c];
    const x = centroids[3 * t] - p.centre[0], y = centroids[3 * t + 1] - p.centre[1], z = centroids[3 * t + 2] - p.centre[2];
    if (p.kind === "sphere") return 1;
    if (p.kind === "box") {
      // Distance to the nearest box edge = second smallest distance to the three face planes.
      const d = [p.size - Math.abs(x), p.size - Math.abs(y), p.size - Math.abs(z)].sort((u, v) => u - v)[1];
      return Math.pow(Math.max(d, 1e-3 * p.size) / p.size, -1 / 3);
    }
    const d = Math.min(p.size[0] - Math.abs(x), p.size[1] - Math.abs(y));
    return Math.pow(Math.max(d, 1e-3 * p.size[0]) / p.size[0], -1 / 2);
  }

  /** Synthetic excitation: conductor `hot` positive (scaled by `scale`), the others negative, brighter on the side facing `hot`. */
  function syntheticExcitation(id, potentials, hot, scale) {
    const sigma = new Float32Array(n), field = new Float32Array(n);
    const sigma64 = new Float64Array(n), field64 = new Float64Array(n);
    const h = parts[hot].centre;
    for (let t = 0; t < n; t++) {
      const c = mesh.conductor[t];
      const p = parts[c];
      const ox = centroids[3 * t] - p.centre[0], oy = centroids[3 * t + 1] - p.centre[1], oz = centroids[3 * t + 2] - p.centre[2];
      const hx = h[0] - centroids[3 * t], hy = h[1] - centroids[3 * t + 1], hz = h[2] - centroids[3 * t + 2];
      const facing = c === hot ? 0 : (ox * hx + oy * hy + oz * hz) / (Math.hypot(ox, oy, oz) * Math.hypot(hx, hy, hz) + 1e-30);
      const s = (c === hot ? 1 : -0.35) * scale * (1 + 0.6 * facing) * edgeFactor(c, t);
      sigma64[t] = s;
      field64[t] = Math.abs(s) / EPSILON_0;
    }
    sigma.set(sigma64); field.set(field64);
    let sLo = Infinity, sHi = -Infinity, fLo = Infinity, fHi = -Infinity, fPos = Infinity;
    for (let t = 0; t < n; t++) {
      sLo = Math.min(sLo, sigma64[t]); sHi = Math.max(sHi, sigma64[t]);
      fLo = Math.min(fLo, field64[t]); fHi = Math.max(fHi, field64[t]);
      if (field64[t] > 0) fPos = Math.min(fPos, field64[t]);
    }
    const diag = Math.hypot(...[0, 1, 2].map((i) => box[i + 3] - box[i]));
    return {
      id, potentials, sigma, field,
      sigmaRange: [sLo, sHi], fieldRange: [fLo, fHi], fieldMinPositive: fPos,
      // By construction every |E| here, sheets included, is |σ|/ε0.
      sheetFieldBound: true,
      hotSpots: hotSpots(field64, sigma64, mesh.conductor, k, centroids, AIR_BREAKDOWN_FIELD, 12, 0.1 * diag),
    };
  }

  const box = boundingBox(mesh.positions);
  const origin = [(box[0] + box[3]) / 2, (box[1] + box[4]) / 2, (box[2] + box[5]) / 2];
  const positions = new Float32Array(mesh.positions.length);
  for (let i = 0; i < positions.length; i++) positions[i] = mesh.positions[i] - origin[i % 3];
  const working = [2000, 0, 0, 0];
  // σ = ε0 V / R of an isolated 4 mm sphere at 2 kV sets the scale: 4.4 µC/m², 0.5 MV/m.
  const sigma0 = EPSILON_0 * 2000 / 4e-3;
  const excitations = [syntheticExcitation("scene", working, 0, sigma0)];
  for (let j = 0; j < k; j++) excitations.push(syntheticExcitation(`unit:${j}`, working.map((_, i) => (i === j ? 1 : 0)), j, EPSILON_0 / parts[0].size));
  const data = {
    names, closed, origin, positions, triangles: mesh.triangles, panelConductor: mesh.conductor, areas,
    breakdownField: AIR_BREAKDOWN_FIELD, permittivity: EPSILON_0, excitations,
  };

  // The report fields the page reads (viewer/src/main.ts): input, created, fieldCheck.cautions,
  // conductors (summary table), warnings. No capacitance tables: there is no solution to show.
  const scene = excitations[0];
  const report = {
    format: "sigmesh-report/1",
    created: new Date().toISOString(),
    input: { files: ["SYNTHETIC viewer benchmark scene (not solved)"], scene: null, unit: "mm" },
    conductors: names.map((name, c) => {
      let q = 0, area = 0, peak = 0, count = 0;
      for (let t = 0; t < n; t++) if (mesh.conductor[t] === c) { q += scene.sigma[t] * areas[t]; area += areas[t]; peak = Math.max(peak, scene.field[t]); count++; }
      return { name, triangles: count, area, closed: closed[c], potential: working[c], charge: q, peakField: peak, fieldRatio: peak / AIR_BREAKDOWN_FIELD };
    }),
    fieldCheck: { breakdownField: AIR_BREAKDOWN_FIELD, cautions: cautionsFor(working) },
    warnings: ["Benchmark page: σ and |E| are synthetic, not solved; only the rendering speed is measured."],
  };
  const html = htmlReport(report, data, bundle);
  const dir = mkdtempSync(join(tmpdir(), "sigmesh-viewer-bench-"));
  const htmlPath = join(dir, "viewer-bench.html");
  writeFileSync(htmlPath, html);
  const buildS = (performance.now() - tBuild) / 1e3;
  console.log(`\n==== ${target} panels requested\nscene: ${n} panels (${names.map((nm, c) => `${nm} ${report.conductors[c].triangles}`).join(", ")}), ${mesh.positions.length / 3} vertices, ${excitations.length} excitations`);
  console.log(`HTML report: ${(statSync(htmlPath).size / 2 ** 20).toFixed(1)} MiB, built and written in ${buildS.toFixed(1)} s`);

  try {
    const page = await browser.newPage({ viewport: { width: vw, height: vh } });
    const errors = [];
    page.on("pageerror", (e) => errors.push(e.message));
    // Page-side clocks (performance.now, from navigation start): every redraw the viewer counts in
    // data-frames, every hover read-out change, and the last pointer move.
    await page.addInitScript(() => {
      const w = window;
      w.__frameTimes = [];
      w.__details = [];
      w.__readoutTimes = [];
      w.__lastMove = 0;
      w.__ready = 0;
      addEventListener("pointermove", () => { w.__lastMove = performance.now(); }, { capture: true });
      new MutationObserver((records) => {
        const now = performance.now();
        for (const r of records) {
          if (r.attributeName === "data-frames") { w.__frameTimes.push(now); w.__details.push(r.target.dataset.detail); }
          else if (r.attributeName === "data-ready" && !w.__ready) w.__ready = now;
          else if (r.attributeName === "data-panel" && r.target.id === "sm-readout") w.__readoutTimes.push([now, w.__lastMove, r.target.getAttribute("data-panel")]);
        }
      }).observe(document, { subtree: true, attributes: true, attributeFilter: ["data-frames", "data-ready", "data-panel"] });
      /** The viewer's WebGL context (same canvas, same type), to wait for the pixels with readPixels. */
      w.__finish = () => {
        const c = document.getElementById("sm-canvas");
        const gl = c.getContext("webgl2") || c.getContext("webgl");
        if (gl) gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, new Uint8Array(4));
        return performance.now();
      };
      /** Resolves at the first redraw after `before` frames, then waits for its pixels. */
      w.__nextFrame = (before) => new Promise((resolve, reject) => {
        const t0 = performance.now();
        const poll = () => {
          if (w.__frameTimes.length > before) resolve(w.__finish());
          else if (performance.now() - t0 > 60000) reject(new Error("no redraw within 60 s"));
          else requestAnimationFrame(poll);
        };
        poll();
      });
    });

    const tNav = performance.now();
    await page.goto(pathToFileURL(htmlPath).href, { timeout: 300000 });
    await page.waitForFunction(() => window.__frameTimes.length > 0, null, { timeout: 300000, polling: 50 });
    const first = await page.evaluate(() => {
      const pixels = window.__finish();
      const nav = performance.getEntriesByType("navigation")[0];
      return { received: nav.responseEnd, domContentLoaded: nav.domContentLoadedEventEnd, ready: window.__ready, firstFrame: window.__frameTimes[0], pixels, heap: performance.memory?.usedJSHeapSize ?? NaN };
    });
    const wallFirst = performance.now() - tNav;
    // Proxies are built in the first idle moment after the first frame.
    const proxyPanels = await page.waitForFunction(() => document.querySelector(".sm-app")?.dataset.proxyPanels, null, { timeout: 10000 })
      .then((h) => h.jsonValue()).then(Number, () => 0);
    const proxyMs = Number(await page.evaluate(() => document.querySelector(".sm-app")?.dataset.proxyMs ?? "NaN"));
    const info = await page.evaluate(() => {
      const gl = document.createElement("canvas").getContext("webgl2");
      const ext = gl?.getExtension("WEBGL_debug_renderer_info");
      const c = document.getElementById("sm-canvas");
      return {
        renderer: ext ? String(gl.getParameter(ext.UNMASKED_RENDERER_WEBGL)) : "unknown",
        canvas: `${c.width}×${c.height}`,
        note: document.getElementById("sm-glnote")?.textContent ?? "",
        panels: document.querySelector(".sm-sub")?.textContent ?? "",
      };
    });
    console.log(`\nbrowser: ${browser.version()}, WebGL renderer "${info.renderer}", canvas ${info.canvas} px, viewport ${vw}×${vh}`);
    if (info.note) console.log(`page's GL note: ${info.note}`);
    console.log("\ntime to first frame (page clock from navigation start)");
    console.log(`  file read                                 ${ms(first.received)}`);
    console.log(`  viewer ready (parsed, decoded, geometry built, coloured) ${ms(first.ready)}`);
    console.log(`  first redraw issued                       ${ms(first.firstFrame)}`);
    console.log(`  first frame's pixels complete (readPixels) ${ms(first.pixels)}`);
    console.log(`  wall clock, goto to first redraw seen     ${ms(wallFirst)}`);
    console.log(proxyPanels ? `  motion proxies: ${proxyPanels} triangles, built in ${ms(proxyMs)} after the first frame` : "  motion proxies: none (few panels: the full mesh is drawn while moving)");
    if (Number.isFinite(first.heap)) console.log(`  JS heap after load                        ${(first.heap / 2 ** 20).toFixed(0)} MiB`);

    // What was timed must be a drawn picture: the share of canvas pixels unlike the background.
    const drawn = await page.evaluate(() => {
      const c = document.getElementById("sm-canvas");
      const off = document.createElement("canvas");
      off.width = c.width; off.height = c.height;
      const g = off.getContext("2d");
      g.drawImage(c, 0, 0);
      const d = g.getImageData(0, 0, off.width, off.height).data;
      let fg = 0;
      for (let i = 0; i < d.length; i += 4) if (Math.abs(d[i] - d[0]) + Math.abs(d[i + 1] - d[1]) + Math.abs(d[i + 2] - d[2]) > 12) fg++;
      return fg / (d.length / 4);
    });
    const shot = join(fileURLToPath(new URL("../artifacts/", import.meta.url)), `viewer-bench-${n}.png`);
    mkdirSync(join(shot, ".."), { recursive: true });
    await page.screenshot({ path: shot });
    console.log(`  drawn: ${(100 * drawn).toFixed(0)} % of the canvas differs from the background (screenshot ${shot})`);

    const rect = await page.evaluate(() => { const r = document.getElementById("sm-canvas").getBoundingClientRect(); return { x: r.left, y: r.top, w: r.width, h: r.height }; });
    const cx = rect.x + rect.w / 2, cy = rect.y + rect.h / 2;

    // Single redraws to pixels (Fit to view always redraws): the cost of one frame of the scene.
    const redraw = [];
    for (let i = 0; i < 8; i++) {
      redraw.push(await page.evaluate(async () => {
        const before = window.__frameTimes.length;
        const t0 = performance.now();
        document.getElementById("sm-fit").click();
        return (await window.__nextFrame(before)) - t0;
      }));
    }

    // Orbit: a left-button drag, one small step at a time as fast as the page takes the input;
    // the intervals between the viewer's redraws are the frame times a user sees.
    const orbit = async (seconds) => {
      await page.mouse.move(cx, cy);
      await page.mouse.down();
      const f0 = await page.evaluate(() => window.__frameTimes.length);
      const t0 = performance.now();
      let step = 0;
      while (performance.now() - t0 < seconds * 1000) {
        step++;
        // Right, then down: the drag ends far from where it began, so the release pins nothing.
        const s = step % 400;
        await page.mouse.move(cx - 150 + Math.min(s, 200) * 1.5, cy - 100 + Math.max(0, s - 200) * 1.0);
      }
      const wall = (performance.now() - t0) / 1e3;
      const { times, details, up } = await page.evaluate((b) => ({ times: window.__frameTimes.slice(b), details: window.__details.slice(b), up: performance.now() }), f0);
      await page.mouse.up();
      // Settling: from the release to the pixels of the first full-detail frame (includes the viewer's rest delay).
      const proxyFrames = details.filter((d) => d === "proxy").length;
      const settle = proxyFrames === 0 ? NaN : await page.evaluate(async ([b, up]) => {
        for (;;) {
          const i = window.__details.findIndex((d, j) => j >= b && d === "full");
          if (i >= 0) return window.__finish() - up;
          if (performance.now() - up > 60000) return NaN;
          await new Promise((r) => requestAnimationFrame(r));
        }
      }, [f0 + times.length, up]);
      const gaps = [];
      for (let i = 1; i < times.length; i++) gaps.push(times[i] - times[i - 1]);
      const slow = gaps.map((g, i) => [g, i]).filter(([g]) => g > 250).map(([g, i]) => `${g.toFixed(0)} ms before frame ${i + 1} (${details[i + 1]})`);
      return { slow, gaps, frames: times.length, proxyFrames, steps: step, wall, settle };
    };
    const o = await orbit(6);

    // Colour changes: the JS recolouring (synchronous, in the change handler) and the redraw to pixels.
    const change = (selector, value) => page.evaluate(async ([sel, val]) => {
      const s = document.querySelector(sel);
      const before = window.__frameTimes.length;
      const t0 = performance.now();
      s.value = val;
      s.dispatchEvent(new Event("change"));
      const t1 = performance.now();
      const t2 = await window.__nextFrame(before);
      return { js: t1 - t0, total: t2 - t0 };
    }, [selector, value]);
    const excitationSwitch = [], quantitySwitch = [], scaleSwitch = [];
    for (let rep = 0; rep < 2; rep++) for (let e = 1; e <= k; e++) excitationSwitch.push(await change("#sm-excitation", String(rep === 1 && e === k ? 0 : e)));
    // "Colour by" and "Scale" are the first two selects of the Display section (they carry no id).
    await page.evaluate(() => document.querySelectorAll(".sm-section select").forEach((s, i) => { s.dataset.benchIndex = String(i); }));
    const quantity = "[data-bench-index='0']", scaleOf = "[data-bench-index='1']";
    for (let rep = 0; rep < 3; rep++) {
      quantitySwitch.push(await change(quantity, "sigma"));
      quantitySwitch.push(await change(quantity, "field"));
      scaleSwitch.push(await change(scaleOf, "log"));
      scaleSwitch.push(await change(scaleOf, "linear"));
    }
    await change(quantity, "sigma"); await change(scaleOf, "log");
    const logSigma = [];
    for (let e = 1; e <= 3; e++) logSigma.push(await change("#sm-excitation", String(e)));

    // Hover pick: pointer moves (no button) over a grid in the middle of the view; latency from
    // the move to the read-out naming the panel (one animation frame plus the ray cast).
    const r0 = await page.evaluate(() => window.__readoutTimes.length);
    let misses = 0;
    for (let i = 0; i < 7; i++) for (let j = 0; j < 5; j++) {
      const before = await page.evaluate(() => window.__readoutTimes.length);
      await page.mouse.move(cx + (i - 3) * rect.w * 0.07, cy + (j - 2) * rect.h * 0.08);
      const got = await page.waitForFunction((b) => window.__readoutTimes.length > b, before, { timeout: 1000, polling: "raf" }).then(() => true, () => false);
      if (!got) misses++;
    }
    const picks = await page.evaluate((b) => window.__readoutTimes.slice(b).map(([now, move]) => now - move), r0);

    // Mesh edges: switched on (drawn by the panel shader; nothing to build), then a redraw.
    const edges = await page.evaluate(async () => {
      const box = document.getElementById("sm-edges");
      const before = window.__frameTimes.length;
      const t0 = performance.now();
      box.checked = true;
      box.dispatchEvent(new Event("change"));
      const t1 = performance.now();
      const t2 = await window.__nextFrame(before);
      return { js: t1 - t0, total: t2 - t0 };
    });
    const redrawEdges = [];
    for (let i = 0; i < 4; i++) {
      redrawEdges.push(await page.evaluate(async () => {
        const before = window.__frameTimes.length;
        const t0 = performance.now();
        document.getElementById("sm-fit").click();
        return (await window.__nextFrame(before)) - t0;
      }));
    }

    console.log("\ninteraction (page clock; 'to pixels' waits for the frame with readPixels)");
    line("one redraw to pixels (Fit to view)", stats(redraw));
    line("orbit drag (moving): interval between redraws", stats(o.gaps));
    console.log(`${"".padEnd(44)} ${o.frames} redraws in ${o.wall.toFixed(1)} s of dragging (${(o.frames / o.wall).toFixed(1)} frames/s), ${o.steps} mouse steps, ${o.proxyFrames} of them proxy frames (${proxyPanels ? proxyPanels + " triangles" : "no proxy below the threshold"})`);
    if (o.slow.length) console.log(`${"".padEnd(44)} slow redraws: ${o.slow.join(", ")}`);
    console.log(`${"release to full-detail frame's pixels".padEnd(44)} ${Number.isNaN(o.settle) ? "n/a (no proxy: every frame is full detail)" : ms(o.settle)}`);
    line("switch excitation: recolour (JS)", stats(excitationSwitch.map((x) => x.js)));
    line("switch excitation: to pixels", stats(excitationSwitch.map((x) => x.total)));
    line("colour by σ / |E|: recolour (JS)", stats(quantitySwitch.map((x) => x.js)));
    line("colour by σ / |E|: to pixels", stats(quantitySwitch.map((x) => x.total)));
    line("linear / log scale: to pixels", stats(scaleSwitch.map((x) => x.total)));
    line("switch excitation, σ log: to pixels", stats(logSigma.map((x) => x.total)));
    line("hover pick: pointer move to read-out", stats(picks));
    if (misses) console.log(`${"".padEnd(44)} ${misses} of 35 pointer positions hit no panel (background)`);
    console.log(`${"mesh edges on: build (JS) / to pixels".padEnd(44)} ${ms(edges.js)} / ${ms(edges.total)}`);
    line("one redraw with edges, to pixels", stats(redrawEdges));
    if (errors.length) console.log(`page errors: ${errors.join("; ")}`);

    console.log(`load average now: ${loads()}`);
    await page.close();
    return { n, first: first.pixels, still: stats(redraw).median, orbit: stats(o.gaps).median, proxy: o.proxyFrames > 0, settle: o.settle,
      edgesOn: edges.total, edgesStill: stats(redrawEdges).median, recolour: stats(excitationSwitch.map((x) => x.total)).median, load: loadavg()[0] };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const summary = [];
try {
  for (const t of targets) summary.push(await benchSize(t));
} finally {
  await browser.close();
}

console.log("\nsummary (median ms; page clock to pixels; SwiftShader software WebGL, machine shared: compare rows within this run)");
console.log(`${"panels".padStart(8)} ${"first frame".padStart(11)} ${"still".padStart(7)} ${"orbit".padStart(7)} ${"drawn".padStart(6)} ${"settle".padStart(7)} ${"edges on".padStart(9)} ${"w/ edges".padStart(9)} ${"recolour".padStart(9)} ${"load 1m".padStart(8)}`);
for (const r of summary) {
  const f = (x) => x.toFixed(0).padStart(7);
  console.log(`${String(r.n).padStart(8)} ${r.first.toFixed(0).padStart(11)} ${f(r.still)} ${f(r.orbit)} ${(r.proxy ? "proxy" : "full").padStart(6)} ${Number.isNaN(r.settle) ? "    n/a" : f(r.settle)} ${r.edgesOn.toFixed(0).padStart(9)} ${r.edgesStill.toFixed(0).padStart(9)} ${r.recolour.toFixed(0).padStart(9)} ${r.load.toFixed(2).padStart(8)}`);
}
console.log(`load average at end: ${loads()}`);
const worst = Math.max(...summary.map((r) => r.orbit));
if (Math.max(...summary.map((r) => r.load)) > c0.length) console.log(`machine busy (1-minute load above ${c0.length} cores during the run): SwiftShader shares the CPU, so these are upper bounds`);
console.log(`verdict (software rendering, SwiftShader on ${c0.length} CPU cores; a GPU machine will be much faster, not measured here): orbit median at most ${ms(worst)} per frame: ${worst < 100 ? "interactive by the < 100 ms bar at every size measured" : "NOT interactive by the < 100 ms bar at the slowest size"}.`);
