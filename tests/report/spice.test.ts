/**
 * SPICE export: read the netlist back and rebuild the matrix. Syntax rules checked here
 * (node names of letters, digits and underscores not starting with a digit; case folding;
 * scale factors with M = milli, MEG = mega) are those of the Berkeley SPICE3 / ngspice
 * user's manuals.
 */
import { describe, it, expect, afterAll } from "vitest";
import fc from "fast-check";
import { spiceSubcircuit, parseSpiceCapacitors, mutualFromSpice, spiceNodeNames, spiceNumber, parseSpiceNumber, spiceLines } from "../../src/report/spice.js";
import { mutualFromMaxwell } from "../../src/extract/capacitance.js";
import { extractMesh } from "../../src/extract/extract-mesh.js";
import { sphereMesh } from "../../src/mesh/primitives/index.js";
import { concatMeshes } from "../../src/mesh/model.js";
import { closeSharedPool } from "../../src/linalg/pool.js";

afterAll(() => closeSharedPool());

const LEGAL = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** A physically shaped Maxwell matrix: positive diagonal, negative off-diagonal, diagonally dominant. */
function maxwellOf(k: number, seed: number): Float64Array {
  let s = seed >>> 0;
  const rnd = (): number => { s = (Math.imul(s, 1664525) + 1013904223) >>> 0; return s / 2 ** 32; };
  const c = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) {
    const v = -(10 ** (-14 + 3 * rnd())); // 0.01 pF … 10 pF, several decades apart
    c[i * k + j] = v; c[j * k + i] = v;
  }
  for (let i = 0; i < k; i++) {
    let off = 0;
    for (let j = 0; j < k; j++) if (j !== i) off -= c[i * k + j];
    c[i * k + i] = off + 10 ** (-13 + 2 * rnd());
  }
  return c;
}

describe("spiceNumber / parseSpiceNumber", () => {
  it("writes engineering notation with scale factors SPICE reads", () => {
    expect(spiceNumber(1.234e-12)).toBe("1.234p");
    expect(spiceNumber(4.7e-9)).toBe("4.7n");
    expect(spiceNumber(0.5)).toBe("500m");
    expect(spiceNumber(12e-15)).toBe("12f");
    expect(spiceNumber(999.9999995e-12)).toBe("1n");
    expect(spiceNumber(-3.3e-6)).toBe("-3.3u");
    expect(spiceNumber(2.5e-18)).toBe("2.5e-18");
    expect(spiceNumber(0)).toBe("0");
  });
  it("reads scale factors, units and exponents as SPICE3 does", () => {
    expect(parseSpiceNumber("1.5p")).toBeCloseTo(1.5e-12, 24);
    expect(parseSpiceNumber("1.5pF")).toBeCloseTo(1.5e-12, 24);
    expect(parseSpiceNumber("2MEG")).toBe(2e6);
    expect(parseSpiceNumber("2m")).toBe(2e-3);
    expect(parseSpiceNumber("3e-12")).toBe(3e-12);
    expect(parseSpiceNumber("10mil")).toBeCloseTo(254e-6, 18);
    expect(parseSpiceNumber("1F")).toBe(1e-15); // F is femto, never farad
    expect(Number.isNaN(parseSpiceNumber("p1"))).toBe(true);
  });
  it("round-trips any value to 6 significant digits", () => {
    fc.assert(fc.property(fc.double({ min: 1e-20, max: 10, noNaN: true }), fc.boolean(), (x, neg) => {
      const v = neg ? -x : x;
      const back = parseSpiceNumber(spiceNumber(v));
      return Math.abs(back - v) <= 5e-6 * Math.abs(v);
    }), { seed: 7, numRuns: 500 });
  });
});

describe("spiceNodeNames", () => {
  it("makes legal, case-insensitively unique names from awkward ones", () => {
    const names = ["pad 1", "<b>guard</b>", "3v3_rail", "Düse", "REF", "ref", "gnd", "0", "", "pad_1", "PAD_1", "µ-trace"];
    const nodes = spiceNodeNames(names, ["REF"]);
    expect(nodes.length).toBe(names.length);
    for (const n of nodes) expect(n).toMatch(LEGAL);
    const lower = nodes.map((n) => n.toLowerCase());
    expect(new Set(lower).size).toBe(nodes.length);
    for (const bad of ["ref", "gnd", "0"]) expect(lower).not.toContain(bad);
    expect(nodes[0]).toBe("pad_1");
    expect(nodes[1]).toBe("b_guard_b");
    expect(nodes[2]).toBe("N3v3_rail");
    expect(nodes[3]).toBe("Duse");
  });
  it("any list of names gives legal, unique node names (property)", () => {
    fc.assert(fc.property(fc.array(fc.string({ unit: "grapheme", maxLength: 12 }), { maxLength: 30 }), (names) => {
      const nodes = spiceNodeNames(names, ["REF"]);
      expect(nodes.length).toBe(names.length);
      for (const n of nodes) expect(n).toMatch(LEGAL);
      const lower = nodes.map((n) => n.toLowerCase());
      expect(new Set([...lower, "ref", "gnd", "0"]).size).toBe(nodes.length + 3);
      return true;
    }), { seed: 3, numRuns: 300 });
  });
});

describe("spiceSubcircuit", () => {
  it("rebuilds the mutual matrix from the netlist within the rounding and the drop threshold", () => {
    let droppedAll = 0;
    for (const k of [1, 2, 5, 9]) {
      const maxwell = maxwellOf(k, 11 * k);
      const mutual = mutualFromMaxwell(maxwell, k);
      const names = Array.from({ length: k }, (_, i) => (i % 3 === 0 ? `${i} pad <${i}>` : `trace ${i}`));
      const threshold = 1e-2;
      const text = spiceSubcircuit(names, mutual, { relativeThreshold: threshold, subcktName: "keypad v2" });
      const back = mutualFromSpice(text, names);
      let largest = 0;
      for (const v of mutual) largest = Math.max(largest, Math.abs(v));
      let dropped = 0;
      for (let i = 0; i < k * k; i++) {
        const err = Math.abs(back[i] - mutual[i]);
        if (back[i] === 0 && mutual[i] !== 0) { dropped++; expect(Math.abs(mutual[i])).toBeLessThan(threshold * largest); }
        else expect(err).toBeLessThanOrEqual(5e-6 * Math.abs(mutual[i]));
      }
      // dropped entries are counted once per pair in the netlist's comment
      let droppedPairs = 0;
      for (let i = 0; i < k; i++) for (let j = i; j < k; j++) if (back[i * k + j] === 0 && mutual[i * k + j] !== 0) droppedPairs++;
      expect(text).toMatch(new RegExp(`dropped: ${droppedPairs} of ${(k * (k + 1)) / 2}`));
      expect(dropped).toBeGreaterThanOrEqual(droppedPairs);
      droppedAll += droppedPairs;
    }
    expect(droppedAll).toBeGreaterThan(0); // the threshold was exercised
  });

  it("has one port per conductor plus the reference, legal names, and matching .SUBCKT/.ENDS", () => {
    const names = ["pad 1", "pad 1", "1st", "a|b"];
    const mutual = mutualFromMaxwell(maxwellOf(4, 3), 4);
    const text = spiceSubcircuit(names, mutual, { reference: "ground plane", title: "line one\nline two" });
    const lines = text.trimEnd().split("\n");
    for (const l of lines) expect(l.startsWith("*") || l.startsWith(".") || /^C\w+ \w+ \w+ \S+$/.test(l)).toBe(true);
    const sub = lines.find((l) => l.startsWith(".SUBCKT"))!.split(" ");
    expect(sub.length).toBe(2 + 4 + 1);
    for (const n of sub.slice(1)) expect(n).toMatch(LEGAL);
    expect(sub[sub.length - 1]).toBe("REF");
    expect(lines[lines.length - 1]).toBe(`.ENDS ${sub[1]}`);
    expect(text).toMatch(/ground plane/);
    const parsed = parseSpiceCapacitors(text);
    expect(parsed.nodes).toEqual(sub.slice(2));
    expect(new Set(parsed.caps.map((c) => c.name.toLowerCase())).size).toBe(parsed.caps.length);
    // the mapping to the original names is in the comments
    for (let i = 0; i < 4; i++) expect(text).toContain(`${parsed.nodes[i]} = ${names[i]}`);
    // threshold 0 keeps all 10 capacitors of a dense 4-conductor network
    expect(parseSpiceCapacitors(spiceSubcircuit(names, mutual, { relativeThreshold: 0 })).caps.length).toBe(10);
  });

  it("names in comments show control and bidirectional characters as visible escapes (C1 and U+202E too)", () => {
    const names = ["pad\x1b[2J\x9b31m", "key\u202eyek\u2066", "ok"];
    const text = spiceSubcircuit(names, mutualFromMaxwell(maxwellOf(3, 5), 3), { title: "run\x07\nnext" });
    expect(/[\0-\x09\x0b-\x1f\x7f-\x9f\p{Cf}]/u.test(text)).toBe(false);
    expect(text).toContain("* run\\x07\\x0anext\n");
    expect(text).toContain("= pad\\x1b[2J\\x9b31m\n");
    expect(text).toContain("= key\\u202eyek\\u2066\n");
    expect(parseSpiceCapacitors(text).nodes.length).toBe(4);
  });

  it("keeps every line within 80 columns on many conductors: ports continue on + lines and read back in order", () => {
    const k = 40;
    const names = Array.from({ length: k }, (_, i) => `sense_electrode_row${Math.floor(i / 8)}_col${i % 8}`);
    const mutual = mutualFromMaxwell(maxwellOf(k, 7), k);
    const text = spiceSubcircuit(names, mutual, { relativeThreshold: 0 });
    const lines = text.trimEnd().split("\n");
    for (const l of lines) expect(l.length, l).toBeLessThanOrEqual(80);
    // plain ASCII apart from the user's own names (older readers choke on other bytes)
    expect(text).toMatch(/^[\x20-\x7e\n]*$/);
    const start = lines.findIndex((l) => l.startsWith(".SUBCKT"));
    expect(lines[start + 1]).toMatch(/^\+ /);
    const parsed = parseSpiceCapacitors(text);
    expect(parsed.nodes).toEqual([...spiceNodeNames(names, ["REF"]), "REF"]);
    const back = mutualFromSpice(text, names);
    for (let i = 0; i < k * k; i++) expect(Math.abs(back[i] - mutual[i])).toBeLessThanOrEqual(5e-6 * Math.abs(mutual[i]));
    // the port list in the comments is wrapped too, as comment lines
    const comment = lines.slice(0, start).filter((l) => l.startsWith("* 40 conductors") || l.startsWith("*   "));
    expect(comment.join(" ")).toContain(names[k - 1]);
  });

  it("names the floating conductors that were eliminated and are no ports", () => {
    const mutual = mutualFromMaxwell(maxwellOf(2, 5), 2);
    const text = spiceSubcircuit(["pad", "trace"], mutual, { eliminated: ["can"] });
    expect(text).toMatch(/^\* floating conductor eliminated \(no net charge, no port\): can$/m);
    expect(parseSpiceCapacitors(text).nodes).toEqual(["pad", "trace", "REF"]);
    expect(spiceSubcircuit(["pad", "trace"], mutual)).not.toMatch(/floating/);
  });

  it("spiceLines breaks between words and leaves an over-long word whole", () => {
    expect(spiceLines(["a", "b"], 80)).toEqual(["a b"]);
    expect(spiceLines(["aaaa", "bbbb", "cccc"], 9)).toEqual(["aaaa bbbb", "+ cccc"]);
    expect(spiceLines(["x".repeat(100)], 80)).toEqual(["x".repeat(100)]);
  });

  it("reads hand-written netlists: continuations, inline comments, unit suffixes, parallel capacitors", () => {
    const text = [
      "* hand written",
      ".subckt two a b ref",
      "c1 a ref 1pF ; to the reference",
      "C2 a",
      "+ b 0.5p",
      "C3 b a 500f $ parallel to C2",
      "C4 b REF 2e-12",
      "R1 a b 1k",
      ".ends two",
      "C9 a b 1",
    ].join("\n");
    const m = mutualFromSpice(text, ["a", "b"]);
    expect(Array.from(m).map((x) => x * 1e12)).toEqual([expect.closeTo(1, 12), expect.closeTo(1, 12), expect.closeTo(1, 12), expect.closeTo(2, 12)]);
    expect(() => mutualFromSpice(".subckt x a ref\nC1 a q 1p\n.ends\n", ["a"])).toThrow(/node q/);
    expect(() => parseSpiceCapacitors("C1 a b pico")).toThrow(/line 1/);
  });

  it("round-trips the mutual matrix of a real extraction; the charges from the rebuilt network match Q = C·V", async () => {
    const ball = (x: number, r: number, name: string) => { const m = sphereMesh({ radius: r, level: 1, center: [x, 0, 0] }); return { ...m, names: [name] }; };
    const res = await extractMesh(concatMeshes([ball(-0.02, 0.01, "HV electrode"), ball(0.02, 0.01, "plate 1"), ball(0.5, 0.002, "far probe")]), { potentials: [1, 0, 0] });
    const names = res.names;
    const back = mutualFromSpice(spiceSubcircuit(names, res.mutual), names);
    let largest = 0;
    for (const v of res.mutual) largest = Math.max(largest, Math.abs(v));
    for (let i = 0; i < 9; i++) expect(Math.abs(back[i] - res.mutual[i])).toBeLessThanOrEqual(Math.max(5e-6 * Math.abs(res.mutual[i]), 1e-4 * largest));
    // Charges of the network at V = (1, 0, 0): Q_i = C_ii^m V_i + Σ_j C_ij^m (V_i − V_j).
    const V = [1, 0, 0];
    for (let i = 0; i < 3; i++) {
      let q = back[i * 3 + i] * V[i];
      for (let j = 0; j < 3; j++) if (j !== i) q += back[i * 3 + j] * (V[i] - V[j]);
      expect(Math.abs(q - res.conductors[i].charge)).toBeLessThanOrEqual(2e-4 * largest);
    }
  });
});
