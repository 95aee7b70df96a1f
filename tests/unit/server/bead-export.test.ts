import { describe, expect, it } from "vitest";
import { BEAD_COLUMNS, beadsToCsv, type PublicBead } from "../../../src/server/services/bead-export";

/** One public bead row with every column empty, then `over`. */
function row(over: Partial<PublicBead>): PublicBead {
  const r = Object.fromEntries(BEAD_COLUMNS.map((c) => [c, null])) as PublicBead;
  return { ...r, ...over };
}

/** RFC 4180 reader (quoted cells, doubled quotes, line breaks inside quotes) for checking the writer. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let cells: string[] = [];
  let cell = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        cell += '"';
        i++;
      } else if (ch === '"') quoted = false;
      else cell += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ",") {
      cells.push(cell);
      cell = "";
    } else if (ch === "\n") {
      cells.push(cell);
      rows.push(cells);
      cells = [];
      cell = "";
    } else cell += ch;
  }
  return rows;
}

/** The reject_reason cell of a one-row export, as a spreadsheet would read it. */
const cellOf = (text: string) => parseCsv(beadsToCsv([row({ id: 1, reject_reason: text })]))[1]!.at(-1)!;

describe("beadsToCsv", () => {
  it("writes the header and plain values unchanged", () => {
    const out = beadsToCsv([
      row({ id: 3, x_px: 12.5, fwhm_x_um: -0.25, included: true, reject_reason: "low_snr" }),
    ]);
    const [header, first] = parseCsv(out);
    expect(header).toEqual([...BEAD_COLUMNS]);
    expect(first![0]).toBe("3");
    expect(first![1]).toBe("12.5");
    expect(first![BEAD_COLUMNS.indexOf("fwhm_x_um")]).toBe("-0.25"); // a number, not a formula
    expect(first![BEAD_COLUMNS.indexOf("included")]).toBe("true");
    expect(first!.at(-1)).toBe("low_snr");
    expect(out.endsWith("\n")).toBe(true);
  });

  it("neutralises text that a spreadsheet would run as a formula", () => {
    // Source: OWASP "CSV Injection" — prefix cells starting with = + - @ tab or carriage return
    // with a single quote, and quote cells holding the separator, quotes or line breaks.
    expect(cellOf('=HYPERLINK("http://x.example","x")')).toBe(`'=HYPERLINK("http://x.example","x")`);
    expect(cellOf("+cmd|' /C calc'!A0")).toBe("'+cmd|' /C calc'!A0");
    expect(cellOf("-2+3")).toBe("'-2+3");
    expect(cellOf("@SUM(1+1)")).toBe("'@SUM(1+1)");
    expect(cellOf("\t=1+1")).toBe("'\t=1+1");
    expect(cellOf("\r=1+1")).toBe("'\r=1+1");
    expect(cellOf("a\rb")).toBe("a\rb"); // a bare CR is quoted, not a row break
    expect(cellOf("a,b\nc")).toBe("a,b\nc");
    expect(cellOf('say "hi"')).toBe('say "hi"');
    expect(parseCsv(beadsToCsv([row({ reject_reason: "a\rb" })]))).toHaveLength(2);
  });

  it("writes non-finite numbers as empty cells", () => {
    const [, first] = parseCsv(beadsToCsv([row({ id: 1, snr: Number.POSITIVE_INFINITY, r2: Number.NaN })]));
    expect(first![BEAD_COLUMNS.indexOf("snr")]).toBe("");
    expect(first![BEAD_COLUMNS.indexOf("r2")]).toBe("");
  });
});
