import { PDFDocument, StandardFonts } from "pdf-lib";
import { describe, expect, it } from "vitest";
import { isWinAnsi, toWinAnsi, wrapText } from "../../../src/server/reports/pdf-text";

describe("toWinAnsi", () => {
  it("keeps what the standard fonts can draw", () => {
    // Source: from memory (WinAnsi = code page 1252: µ U+00B5, × U+00D7, en dash at 0x96); checked against pdf-lib's encoder below.
    expect(toWinAnsi("63× / 1.40 oil, 0.17 µm – ±0.02 “ok” ©")).toBe(
      "63× / 1.40 oil, 0.17 µm – ±0.02 “ok” ©",
    );
  });

  it("spells out what they cannot", () => {
    expect(toWinAnsi("σ 0.012")).toBe("sigma 0.012");
    expect(toWinAnsi("more than 3σ above")).toBe("more than 3 sigma above");
    expect(toWinAnsi("field: old → new")).toBe("field: old -> new");
    expect(toWinAnsi("ratio ≤ 1.5, ≥ 0.8, ≈ 1")).toBe("ratio <= 1.5, >= 0.8, ~ 1");
    expect(toWinAnsi("λ 520 nm, 5 μm")).toBe("lambda 520 nm, 5 µm"); // Greek mu becomes the micro sign
    expect(toWinAnsi("1₃s, 10⁴")).toBe("1_3s, 10^4");
    expect(toWinAnsi("−0.5")).toBe("-0.5");
    expect(toWinAnsi("Łódź")).toBe("Lódz"); // accents outside WinAnsi are dropped (NFKD); Ł, which has none, is mapped
  });

  it("drops control characters and marks the unknown", () => {
    expect(toWinAnsi("a\u0000b\u200bc\u00add")).toBe("abcd");
    expect(toWinAnsi("a\tb")).toBe("a    b");
    expect(toWinAnsi("ok 😀 中")).toBe("ok ? ?");
  });

  it("always gives text that pdf-lib's Helvetica encodes", async () => {
    const doc = await PDFDocument.create();
    const font = await doc.embedFont(StandardFonts.Helvetica);
    const supported = new Set(font.getCharacterSet());
    const bad: string[] = [];
    for (let cp = 0; cp < 0x3000; cp++) {
      if (cp >= 0xd800 && cp <= 0xdfff) continue;
      const out = toWinAnsi(String.fromCodePoint(cp));
      for (const ch of out) if (!supported.has(ch.codePointAt(0)!)) bad.push(cp.toString(16));
      if (isWinAnsi(cp) !== supported.has(cp) && cp !== 0xa0 && cp !== 0xad && cp >= 0x20)
        bad.push(`isWinAnsi ${cp.toString(16)}`);
    }
    expect(bad).toEqual([]);
    expect(() => font.encodeText(toWinAnsi("3σ → ≤ μ ⁴ ₃ 😀"))).not.toThrow();
  });
});

describe("wrapText", () => {
  const measure = (s: string) => s.length; // one unit per character

  it("wraps greedily, keeps blank lines, cuts words longer than a line", () => {
    expect(wrapText("aaa bbb ccc", 7, measure)).toEqual(["aaa bbb", "ccc"]);
    expect(wrapText("one\n\ntwo", 10, measure)).toEqual(["one", "", "two"]);
    expect(wrapText("abcdefghij", 4, measure)).toEqual(["abcd", "efgh", "ij"]);
    for (const line of wrapText("x ".repeat(200) + "y".repeat(30), 9, measure))
      expect(line.length).toBeLessThanOrEqual(9);
  });

  it("rejects a width that is not positive", () => {
    expect(() => wrapText("a", 0, measure)).toThrow(RangeError);
  });
});
