// Names made safe to show: control, format and separator characters become visible escapes;
// plain text (accents, CJK, spaces, emoji, Persian with its joiners, Windows paths) is kept.
import { describe, it, expect } from "vitest";
import fc from "fast-check";
import { displayText, displayLines, jsonDisplaySafe } from "../../src/io/display-text.js";

/** What must never reach a terminal raw (the line feed is allowed only by displayLines). */
const RAW = /[\p{Cc}\p{Cf}\p{Zl}\p{Zp}\p{Cs}]/u;

describe("displayText", () => {
  it("escapes ANSI escape sequences, BEL, line breaks, DEL and C1 controls visibly", () => {
    expect(displayText("pad\x1b]0;pwned\x07\x1b[2J")).toBe("pad\\x1b]0;pwned\\x07\\x1b[2J");
    expect(displayText("a\nOK: mesh can be solved\r")).toBe("a\\x0aOK: mesh can be solved\\x0d");
    expect(displayText("tab\there")).toBe("tab\\x09here");
    expect(displayText("del\x7f c1\x9b nel\x85")).toBe("del\\x7f c1\\x9b nel\\x85");
    expect(displayText("nul\0")).toBe("nul\\x00");
  });

  it("escapes bidirectional overrides and isolates, zero-width and other invisible format characters", () => {
    for (let c = 0x202a; c <= 0x202e; c++) expect(displayText(`a${String.fromCharCode(c)}b`)).toBe(`a\\u${c.toString(16)}b`);
    for (let c = 0x2066; c <= 0x2069; c++) expect(displayText(`a${String.fromCharCode(c)}b`)).toBe(`a\\u${c.toString(16)}b`);
    expect(displayText("gnd\u200b")).toBe("gnd\\u200b");
    expect(displayText("\ufeffpad")).toBe("\\ufeffpad");
    expect(displayText("a\u200eb\u200fc\u061cd")).toBe("a\\u200eb\\u200fc\\u061cd");
    expect(displayText("soft\u00adhyphen")).toBe("soft\\xadhyphen");
    expect(displayText("line\u2028para\u2029")).toBe("line\\u2028para\\u2029");
    // a tag character beyond the BMP, and a lone surrogate
    expect(displayText("x\u{e0041}y")).toBe("x\\u{e0041}y");
    expect(displayText("bad\ud800")).toBe("bad\\ud800");
  });

  it("keeps plain names as they are", () => {
    for (const s of ["pad", "Düse 1", "电极", "電極 A", "ground plane", "C:\\boards\\key.stl", "élément—ß", "+3V3", "key~x", "👍🏽", "Ω"]) {
      expect(displayText(s)).toBe(s);
    }
  });

  it("keeps the joiners that spell Persian words and emoji sequences, and escapes them after ASCII", () => {
    const persian = "می\u200cخواهم";
    expect(displayText(persian)).toBe(persian);
    const family = "👨\u200d👩\u200d👧";
    expect(displayText(family)).toBe(family);
    const heartOnFire = "❤\ufe0f\u200d🔥";
    expect(displayText(heartOnFire)).toBe(heartOnFire);
    expect(displayText("pad\u200d")).toBe("pad\\u200d");
    expect(displayText("\u200cpad")).toBe("\\u200cpad");
    expect(displayText("a\u200d\u200db")).toBe("a\\u200d\\u200db");
  });

  it("leaves no raw control or format character in any string, and escaping twice changes nothing", () => {
    fc.assert(fc.property(fc.string({ unit: "binary", maxLength: 40 }), (s) => {
      const d = displayText(s);
      // Only the joiners after a non-ASCII letter, mark or symbol remain.
      expect(RAW.test(d.replace(/(?<=[^\x00-\x7f])[\u200c\u200d]/gu, ""))).toBe(false);
      expect(displayText(d)).toBe(d);
    }), { numRuns: 2000 });
  });

  it("displayLines keeps the line breaks and escapes the rest", () => {
    expect(displayLines("one\x1b[2J\ntwo\u202e\n")).toBe("one\\x1b[2J\ntwo\\u202e\n");
  });
});

describe("jsonDisplaySafe", () => {
  it("writes DEL, C1 and format characters as \\u escapes: the same value when parsed", () => {
    const name = "pad\x1b]0;pwned\x07\x1b[2J\u202eevil\x7f\x9b\u2028\u{e0041}\u200d";
    const text = jsonDisplaySafe(JSON.stringify({ name }));
    expect(RAW.test(text)).toBe(false);
    expect(JSON.parse(text).name).toBe(name);
    // indented: the line breaks between tokens stay
    const indented = jsonDisplaySafe(JSON.stringify({ name, tab: "\t" }, null, 2));
    expect(indented).toBe(`{\n  "name": ${text.slice(8, -1)},\n  "tab": "\\t"\n}`);
    expect(JSON.parse(indented).name).toBe(name);
  });

  it("any string survives the round trip", () => {
    fc.assert(fc.property(fc.string({ unit: "binary", maxLength: 40 }), (s) => {
      const text = jsonDisplaySafe(JSON.stringify([s], null, "\t"));
      expect(RAW.test(text.replace(/[\t\n]/g, ""))).toBe(false);
      expect(JSON.parse(text)[0]).toBe(s);
    }), { numRuns: 2000 });
  });
});
