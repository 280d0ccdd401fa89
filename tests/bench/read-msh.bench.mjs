// Gmsh MSH reading benchmark: a 1M-triangle closed torus written as MSH 4.1 binary (size_t 8),
// 2.2 binary and 4.1 ASCII, built here byte by byte, then loaded (read + weld + degenerate drop)
// with the library's pipeline, best of 3. Figures only; no pass/fail. Load average printed beside them.
import { loadavg } from "node:os";
import { parseMeshBytes } from "../../dist/src/io/load.js";

const nu = 1000, nv = 500, R = 50, r = 15; // millimetres
const nn = nu * nv, nt = 2 * nn;
const P = new Float64Array(3 * nn);
for (let i = 0; i < nu; i++) for (let j = 0; j < nv; j++) {
  const u = (2 * Math.PI * i) / nu, v = (2 * Math.PI * j) / nv, o = 3 * (i * nv + j);
  P[o] = (R + r * Math.cos(v)) * Math.cos(u); P[o + 1] = (R + r * Math.cos(v)) * Math.sin(u); P[o + 2] = r * Math.sin(v);
}
const T = new Uint32Array(3 * nt);
for (let i = 0, k = 0; i < nu; i++) for (let j = 0; j < nv; j++) {
  const a = i * nv + j, b = ((i + 1) % nu) * nv + j, c = ((i + 1) % nu) * nv + ((j + 1) % nv), d = i * nv + ((j + 1) % nv);
  T[k++] = a + 1; T[k++] = b + 1; T[k++] = c + 1; T[k++] = a + 1; T[k++] = c + 1; T[k++] = d + 1;
}
const enc = (s) => new TextEncoder().encode(s);
function join(parts) {
  const n = parts.reduce((s, p) => s + p.length, 0), out = new Uint8Array(n);
  let o = 0; for (const p of parts) { out.set(p, o); o += p.length; }
  return out;
}
function msh41() {
  const head = enc('$MeshFormat\n4.1 1 8\n'), one = new Uint8Array(4); new DataView(one.buffer).setInt32(0, 1, true);
  const nodes = new DataView(new ArrayBuffer(32 + 20 + 8 * nn + 24 * nn));
  let o = 0; const sz = (x) => { nodes.setBigUint64(o, BigInt(x), true); o += 8; };
  sz(1); sz(nn); sz(1); sz(nn); nodes.setInt32(o, 2, true); nodes.setInt32(o + 4, 1, true); nodes.setInt32(o + 8, 0, true); o += 12; sz(nn);
  for (let k = 0; k < nn; k++) sz(k + 1);
  for (let k = 0; k < 3 * nn; k++) { nodes.setFloat64(o, P[k], true); o += 8; }
  const els = new DataView(new ArrayBuffer(32 + 20 + 32 * nt));
  o = 0; const se = (x) => { els.setUint32(o, x, true); els.setUint32(o + 4, 0, true); o += 8; };
  se(1); se(nt); se(1); se(nt); els.setInt32(o, 2, true); els.setInt32(o + 4, 1, true); els.setInt32(o + 8, 2, true); o += 12; se(nt);
  for (let t = 0; t < nt; t++) { se(t + 1); se(T[3 * t]); se(T[3 * t + 1]); se(T[3 * t + 2]); }
  return join([head, one, enc("\n$EndMeshFormat\n$Nodes\n"), new Uint8Array(nodes.buffer), enc("\n$EndNodes\n$Elements\n"), new Uint8Array(els.buffer), enc("\n$EndElements\n")]);
}
function msh22() {
  const one = new Uint8Array(4); new DataView(one.buffer).setInt32(0, 1, true);
  const nodes = new DataView(new ArrayBuffer(28 * nn));
  for (let k = 0, o = 0; k < nn; k++, o += 28) { nodes.setInt32(o, k + 1, true); for (let c = 0; c < 3; c++) nodes.setFloat64(o + 4 + 8 * c, P[3 * k + c], true); }
  const els = new DataView(new ArrayBuffer(12 + 24 * nt));
  els.setInt32(0, 2, true); els.setInt32(4, nt, true); els.setInt32(8, 2, true);
  for (let t = 0, o = 12; t < nt; t++, o += 24) { els.setInt32(o, t + 1, true); els.setInt32(o + 4, 1, true); els.setInt32(o + 8, 1, true); for (let j = 0; j < 3; j++) els.setInt32(o + 12 + 4 * j, T[3 * t + j], true); }
  return join([enc("$MeshFormat\n2.2 1 8\n"), one, enc(`\n$EndMeshFormat\n$Nodes\n${nn}\n`), new Uint8Array(nodes.buffer), enc(`\n$EndNodes\n$Elements\n${nt}\n`), new Uint8Array(els.buffer), enc("\n$EndElements\n")]);
}
function msh41Ascii() {
  const parts = [`$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$Nodes\n1 ${nn} 1 ${nn}\n2 1 0 ${nn}\n`];
  for (let k = 1; k <= nn; k++) parts.push(`${k}\n`);
  for (let k = 0; k < nn; k++) parts.push(`${P[3 * k].toFixed(6)} ${P[3 * k + 1].toFixed(6)} ${P[3 * k + 2].toFixed(6)}\n`);
  parts.push(`$EndNodes\n$Elements\n1 ${nt} 1 ${nt}\n2 1 2 ${nt}\n`);
  for (let t = 0; t < nt; t++) parts.push(`${t + 1} ${T[3 * t]} ${T[3 * t + 1]} ${T[3 * t + 2]}\n`);
  parts.push("$EndElements\n");
  return enc(parts.join(""));
}

for (const [name, make] of [["msh 4.1 binary", msh41], ["msh 2.2 binary", msh22], ["msh 4.1 ASCII", msh41Ascii]]) {
  const bytes = make();
  globalThis.gc?.();
  const runs = [];
  let res;
  for (let k = 0; k < 3; k++) {
    const t0 = performance.now();
    res = parseMeshBytes(bytes, "torus.msh", { unit: "mm" });
    runs.push((performance.now() - t0) / 1000);
    globalThis.gc?.();
  }
  const best = Math.min(...runs);
  const ok = res.mesh.triangles.length / 3 === nt && res.mesh.positions.length / 3 === nn;
  console.log(`${name.padEnd(15)} ${nt} triangles, ${(bytes.length / 2 ** 20).toFixed(1)} MiB: load best ${best.toFixed(2)} s of [${runs.map((s) => s.toFixed(2)).join(", ")}] = ${(nt / best / 1e6).toFixed(2)} M triangles/s ${ok ? "(as generated)" : "(MISMATCH)"}; load average ${loadavg().map((x) => x.toFixed(1)).join(" ")}`);
}
