/**
 * Text from files (conductor names, paths, messages quoting them) made safe to show on a
 * terminal or in Markdown: every character that moves the cursor, changes the terminal's
 * state or reorders or hides text is written as a visible escape, and nothing else changes.
 *
 * Escaped: the controls (Unicode general category Cc: C0, DEL, C1 — ESC starts the ANSI
 * escape sequences of ECMA-48 that clear a screen or retitle a window; BEL; CR and LF, which
 * forge lines), the format characters (Cf: the bidirectional embeddings, overrides and
 * isolates U+202A–U+202E and U+2066–U+2069 that reorder what is shown — the "Trojan Source"
 * attack, CVE-2021-42574 — marks and zero-width characters that hide differences between
 * names), the line and paragraph separators (Zl, Zp) and unpaired surrogates (Cs). A
 * character up to U+00FF is written `\xhh`, one up to U+FFFF `\uhhhh`, one beyond `\u{hhhhh}`.
 *
 * Two format characters are kept where they do a job: the zero-width non-joiner and joiner
 * (U+200C, U+200D) after a letter, mark or symbol outside ASCII, where Persian, the Indic
 * scripts and emoji sequences need them to spell a word; after anything else they are escaped.
 *
 * The backslash itself is not escaped, so that plain names and Windows paths are shown as
 * they are and escaping twice changes nothing; the JSON report keeps every name exactly.
 */

const UNSAFE = /[\p{Cc}\p{Cf}\p{Zl}\p{Zp}\p{Cs}]/u;
const UNSAFE_ALL = /[\p{Cc}\p{Cf}\p{Zl}\p{Zp}\p{Cs}]/gu;
/** What a zero-width (non-)joiner may follow and still be kept. */
const JOINS = /[\p{L}\p{M}\p{So}\p{Sk}]/u;

function escapeCode(code: number): string {
  const hex = code.toString(16);
  if (code <= 0xff) return `\\x${hex.padStart(2, "0")}`;
  if (code <= 0xffff) return `\\u${hex.padStart(4, "0")}`;
  return `\\u{${hex}}`;
}

/**
 * `text` as one line safe to show: every control, format, separator and lone surrogate
 * character written as a visible escape (newlines and tabs too). Plain text is returned as
 * it is.
 */
export function displayText(text: string): string {
  if (!UNSAFE.test(text)) return text;
  return text.replace(UNSAFE_ALL, (ch, offset: number) => {
    const code = ch.codePointAt(0)!;
    if ((code === 0x200c || code === 0x200d) && offset > 0) {
      // The code point before, read backwards over a surrogate pair.
      const low = text.charCodeAt(offset - 1);
      const start = low >= 0xdc00 && low <= 0xdfff && offset > 1 ? offset - 2 : offset - 1;
      const prev = String.fromCodePoint(text.codePointAt(start)!);
      if (prev.codePointAt(0)! > 0x7f && JOINS.test(prev)) return ch;
    }
    return escapeCode(code);
  });
}

/** Several lines of text safe to show: each line as by `displayText`, the line breaks kept. */
export function displayLines(text: string): string {
  return text.split("\n").map(displayText).join("\n");
}

/**
 * Text from `JSON.stringify` with the characters `displayText` escapes written as `\uhhhh`
 * escapes (pairs of them beyond U+FFFF): the same value when parsed (RFC 8259, section 7),
 * while the text can be shown on a terminal. `JSON.stringify` escapes C0 and lone surrogates
 * in strings, but writes DEL, C1 and the format characters raw. Tab, line feed and carriage
 * return are left alone: in its output they are the whitespace between tokens.
 */
export function jsonDisplaySafe(json: string): string {
  if (!UNSAFE.test(json)) return json;
  return json.replace(UNSAFE_ALL, (ch) => {
    if (ch === "\n" || ch === "\t" || ch === "\r") return ch;
    let s = "";
    for (let i = 0; i < ch.length; i++) s += `\\u${ch.charCodeAt(i).toString(16).padStart(4, "0")}`;
    return s;
  });
}
