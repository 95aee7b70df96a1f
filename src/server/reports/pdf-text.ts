/**
 * Text for PDFs drawn with the standard (built-in) fonts. Those fonts only encode
 * WinAnsi (Windows code page 1252): printable ASCII, Latin-1 and a few typographic
 * marks. `toWinAnsi` keeps what they can draw and spells out the rest (σ → "sigma",
 * → → "->", ≤ → "<="), so user text such as a report or an objective name never
 * makes the renderer throw. Pure: no pdf-lib, no I/O.
 */

/** Code points above ASCII that WinAnsi encodes (cp1252's 0x80–0x9F block, then Latin-1). */
const WIN_ANSI_EXTRA = new Set<number>([
  0x152, 0x153, 0x160, 0x161, 0x178, 0x17d, 0x17e, 0x192, 0x2c6, 0x2dc, 0x2013, 0x2014, 0x2018, 0x2019,
  0x201a, 0x201c, 0x201d, 0x201e, 0x2020, 0x2021, 0x2022, 0x2026, 0x2030, 0x2039, 0x203a, 0x20ac, 0x2122,
]);

/** True when the standard fonts can draw this code point. */
export function isWinAnsi(codePoint: number): boolean {
  return (
    (codePoint >= 0x20 && codePoint <= 0x7e) ||
    (codePoint >= 0xa1 && codePoint <= 0xff && codePoint !== 0xad) ||
    WIN_ANSI_EXTRA.has(codePoint)
  );
}

/** Spelled-out replacements for characters we use (or users type) that WinAnsi lacks. */
const REPLACEMENTS: Record<string, string> = {
  // Greek (statistics and optics)
  "\u03c3": "sigma",
  "\u03a3": "Sigma",
  "\u03bc": "\u00b5", // Greek mu → micro sign, which WinAnsi has
  "\u03bb": "lambda",
  "\u0394": "Delta",
  "\u03b4": "delta",
  "\u03b1": "alpha",
  "\u03b2": "beta",
  "\u03b3": "gamma",
  "\u03b8": "theta",
  "\u03c0": "pi",
  "\u03a9": "Ohm",
  "\u03c7": "chi",
  // arrows and relations
  "\u2192": "->",
  "\u2190": "<-",
  "\u2194": "<->",
  "\u21d2": "=>",
  "\u2264": "<=",
  "\u2265": ">=",
  "\u2260": "!=",
  "\u2248": "~",
  "\u223c": "~",
  "\u2212": "-", // minus sign
  "\u2010": "-",
  "\u2011": "-",
  "\u2012": "-",
  "\u2015": "-",
  "\u221e": "inf",
  "\u221a": "sqrt",
  "\u2032": "'",
  "\u2033": '"',
  "\u2713": "[ok]",
  "\u2714": "[ok]",
  "\u2717": "[x]",
  "\u2718": "[x]",
  // Latin letters that NFKD does not take apart
  "\u0141": "L",
  "\u0142": "l",
  "\u0110": "D",
  "\u0111": "d",
  "\u0131": "i",
  "\u0127": "h",
  // spaces and invisible marks
  "\u00a0": " ",
  "\u2009": " ",
  "\u200a": " ",
  "\u202f": " ",
  "\u2002": " ",
  "\u2003": " ",
  "\u00ad": "",
  "\u200b": "",
  "\u200c": "",
  "\u200d": "",
  "\ufeff": "",
  "\t": "    ",
};

const SUBSCRIPT_DIGITS = "\u2080\u2081\u2082\u2083\u2084\u2085\u2086\u2087\u2088\u2089";
const SUPER_DIGITS = "\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079";

/**
 * One line of text made drawable by the standard fonts. Line breaks are not
 * expected here (split first); any other control character is dropped, and a
 * character with no replacement loses its accents (NFKD) or becomes "?".
 */
export function toWinAnsi(text: string): string {
  let out = "";
  for (const ch of text) {
    const cp = ch.codePointAt(0)!;
    if (isWinAnsi(cp) && cp !== 0xa0) {
      out += ch;
      continue;
    }
    const replacement = REPLACEMENTS[ch];
    if (replacement !== undefined) {
      // "3σ" reads "3 sigma", not "3sigma".
      const spaced = /^[A-Za-z]{2,}$/.test(replacement) && /[A-Za-z0-9]$/.test(out);
      out += spaced ? ` ${replacement}` : replacement;
      continue;
    }
    if (cp < 0x20 || (cp >= 0x7f && cp < 0xa0)) continue; // control characters
    const sub = SUBSCRIPT_DIGITS.indexOf(ch);
    if (sub >= 0) {
      out += `_${sub}`;
      continue;
    }
    const sup = SUPER_DIGITS.indexOf(ch);
    if (sup >= 0) {
      out += `^${sup}`;
      continue;
    }
    const stripped = [...ch.normalize("NFKD")].filter((c) => isWinAnsi(c.codePointAt(0)!)).join("");
    out += stripped || "?";
  }
  return out;
}

/**
 * Greedy word wrap to `maxWidth` (in the units of `measure`, e.g. points). Blank
 * lines in `text` are kept; a word longer than the line is cut. The text should
 * already be drawable (see `toWinAnsi`) when `measure` needs that.
 */
export function wrapText(text: string, maxWidth: number, measure: (s: string) => number): string[] {
  if (!(maxWidth > 0)) throw new RangeError("wrapText: maxWidth must be positive");
  const lines: string[] = [];
  for (const paragraph of text.replace(/\r\n?/g, "\n").split("\n")) {
    const words = paragraph.split(/ +/).filter(Boolean);
    if (words.length === 0) {
      lines.push("");
      continue;
    }
    let line = "";
    for (let word of words) {
      const candidate = line ? `${line} ${word}` : word;
      if (measure(candidate) <= maxWidth) {
        line = candidate;
        continue;
      }
      if (line) lines.push(line);
      // A word wider than the whole line: cut it into pieces that fit.
      while (measure(word) > maxWidth && word.length > 1) {
        let n = word.length - 1;
        while (n > 1 && measure(word.slice(0, n)) > maxWidth) n--;
        lines.push(word.slice(0, n));
        word = word.slice(n);
      }
      line = word;
    }
    lines.push(line);
  }
  return lines;
}
