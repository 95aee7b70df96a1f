import { describe, expect, it } from "vitest";
import { zlibSync } from "fflate";
import { makeRng } from "../../../../fixtures/synthetic-stack";
import {
  applyPredictor,
  decodeDeflate,
  decodeLzw,
  decodePackbits,
  TiffInputError,
} from "../../../../src/lib/tiff";

/**
 * Minimal TIFF LZW encoder for round-trip tests (MSB-first codes, 9–12 bits, early change,
 * clear at 4094). Source: TIFF 6.0 specification, section 13 (from memory).
 */
function encodeLzw(data: Uint8Array): Uint8Array {
  const out: number[] = [];
  let acc = 0;
  let nbits = 0;
  let width = 9;
  const emit = (code: number) => {
    acc = (acc << width) | code;
    nbits += width;
    while (nbits >= 8) {
      out.push((acc >>> (nbits - 8)) & 0xff);
      nbits -= 8;
    }
    acc &= (1 << nbits) - 1;
  };
  let dict = new Map<string, number>();
  let next = 258;
  emit(256);
  let w = "";
  for (const byte of data) {
    const wc = w + String.fromCharCode(byte);
    if (w === "" || dict.has(wc) || wc.length === 1) {
      w = wc;
      continue;
    }
    emit(w.length === 1 ? w.charCodeAt(0) : dict.get(w)!);
    dict.set(wc, next++);
    // The encoder widens when the next free code no longer fits; the decoder, one entry behind,
    // therefore widens one code early ("early change").
    if (next >= 1 << width && width < 12) width++;
    if (next >= 4094) {
      emit(256);
      dict = new Map();
      next = 258;
      width = 9;
    }
    w = String.fromCharCode(byte);
  }
  if (w !== "") emit(w.length === 1 ? w.charCodeAt(0) : dict.get(w)!);
  emit(257);
  if (nbits > 0) out.push((acc << (8 - nbits)) & 0xff);
  return Uint8Array.from(out);
}

describe("decodeLzw", () => {
  it("round-trips random, repetitive (KwKwK) and long (table-clearing) data", () => {
    const rng = makeRng(3);
    const cases = [
      new Uint8Array(5000).map(() => Math.floor(rng() * 256)),
      new Uint8Array(20000).fill(7),
      new Uint8Array(70000).map((_, i) => (i % 17) * 3 + Math.floor(rng() * 3)),
      Uint8Array.of(1),
    ];
    for (const data of cases) {
      const out = new Uint8Array(data.length);
      expect(decodeLzw(encodeLzw(data), out)).toBe(data.length);
      expect(Buffer.compare(Buffer.from(out), Buffer.from(data))).toBe(0);
    }
  });
  it("stops at the output size and throws corrupt_data on an impossible code", () => {
    const data = new Uint8Array(1000).map((_, i) => i & 0xff);
    expect(decodeLzw(encodeLzw(data), new Uint8Array(100))).toBe(100);
    // Clear, then code 300 with an empty table.
    const bad = Uint8Array.of(0x80, 0x4b, 0x00, 0x00);
    expect(() => decodeLzw(bad, new Uint8Array(10))).toThrow(TiffInputError);
  });
});

describe("decodePackbits", () => {
  it("decodes the specification's example", () => {
    // Source: TIFF 6.0 specification, section 9 "PackBits Compression", worked example (from memory).
    const packed = Uint8Array.from([
      0xfe, 0xaa, 0x02, 0x80, 0x00, 0x2a, 0xfd, 0xaa, 0x03, 0x80, 0x00, 0x2a, 0x22, 0xf7, 0xaa,
    ]);
    const expected = [
      0xaa,
      0xaa,
      0xaa,
      0x80,
      0x00,
      0x2a,
      0xaa,
      0xaa,
      0xaa,
      0xaa,
      0x80,
      0x00,
      0x2a,
      0x22,
      ...new Array(10).fill(0xaa),
    ];
    const out = new Uint8Array(expected.length);
    expect(decodePackbits(packed, out)).toBe(expected.length);
    expect(Array.from(out)).toEqual(expected);
  });
  it("survives truncated input", () => {
    expect(decodePackbits(Uint8Array.of(0x05, 1, 2), new Uint8Array(6))).toBe(2);
    expect(decodePackbits(Uint8Array.of(0xf0), new Uint8Array(6))).toBe(0);
  });
});

describe("decodeDeflate", () => {
  it("inflates zlib streams into the given buffer and maps failures to corrupt_data", () => {
    const data = new Uint8Array(3000).map((_, i) => i % 251);
    const out = new Uint8Array(3000);
    expect(decodeDeflate(zlibSync(data), out)).toBe(3000);
    expect(Array.from(out.subarray(0, 5))).toEqual([0, 1, 2, 3, 4]);
    // BTYPE = 11 is reserved (RFC 1951, section 3.2.3).
    expect(() =>
      decodeDeflate(Uint8Array.of(0x78, 0x9c, 0x07, 0x00, 0, 0, 0, 0), new Uint8Array(10)),
    ).toThrow(TiffInputError);
    // A truncated stream.
    expect(() => decodeDeflate(zlibSync(data).subarray(0, 40), out)).toThrow(TiffInputError);
    // An empty payload decodes to nothing (the caller reports the shortfall).
    expect(decodeDeflate(Uint8Array.of(0x78, 0x9c, 0, 0, 0, 1), out)).toBe(0);
  });
});

describe("applyPredictor", () => {
  it("undoes horizontal differencing for 8, 16 and 32-bit samples, modulo 2^bits", () => {
    // Source: TIFF 6.0 specification, section 14 "Differencing Predictor".
    const b8 = Uint8Array.of(10, 5, 250, 1, 2, 3);
    applyPredictor(b8, 2, 3, 2, 1);
    expect(Array.from(b8)).toEqual([10, 15, 9, 1, 3, 6]);
    const u16 = Uint16Array.of(65535, 2, 3);
    applyPredictor(new Uint8Array(u16.buffer), 2, 3, 1, 2);
    expect(Array.from(u16)).toEqual([65535, 1, 4]);
    const u32 = Uint32Array.of(1, 4294967295, 5);
    applyPredictor(new Uint8Array(u32.buffer), 2, 3, 1, 4);
    expect(Array.from(u32)).toEqual([1, 0, 5]);
  });
  it("refuses unknown predictors", () => {
    expect(() => applyPredictor(new Uint8Array(4), 4, 2, 1, 2)).toThrow(TiffInputError);
    expect(() => applyPredictor(new Uint8Array(4), 3, 2, 1, 2)).toThrow(TiffInputError);
  });
});
