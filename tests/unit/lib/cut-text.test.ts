import { describe, expect, it } from "vitest";
import { cutText } from "@/lib/text/cut-text";

// Source: Unicode Standard §3.8 — a supplementary character is one high (D800–DBFF) and one low
// (DC00–DFFF) surrogate in UTF-16; a string must not end in an unpaired high surrogate.
describe("cutText", () => {
  it("keeps text that fits, and cuts plain text at the limit", () => {
    expect(cutText("bead.tif", 255)).toBe("bead.tif");
    expect(cutText("abcdef", 4)).toBe("abcd");
  });

  it("never leaves half of a surrogate pair at the end", () => {
    const s = "abc🧪def"; // 🧪 is U+1F9EA: code units 3 and 4
    expect(cutText(s, 4)).toBe("abc");
    expect(cutText(s, 5)).toBe("abc🧪");
    for (let n = 1; n <= s.length; n++) {
      const cut = cutText(s, n);
      expect(cut.length).toBeLessThanOrEqual(n);
      expect(/[\uD800-\uDBFF]$/.test(cut), `cut at ${n}`).toBe(false);
    }
  });
});
