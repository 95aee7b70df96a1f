/**
 * A minimal PNG encoder for 8-bit greyscale images (stack thumbnails). No PNG package is a
 * dependency of the project, and this needs only node:zlib (deflate and CRC-32).
 *
 * Source: PNG specification, 3rd edition (W3C), §5 datastream structure, §11.2 IHDR/IDAT/IEND,
 * §7.3 filter type 0 per scanline — from memory.
 */
import { crc32, deflateSync } from "node:zlib";

const SIGNATURE = Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a);

/** Encode width × height 8-bit grey pixels (row-major) as PNG bytes. */
export function encodeGreyPng(image: { width: number; height: number; data: Uint8Array }): Uint8Array {
  const { width, height, data } = image;
  if (!Number.isInteger(width) || width < 1 || !Number.isInteger(height) || height < 1) {
    throw new RangeError(`PNG width and height must be positive integers, got ${width} × ${height}`);
  }
  if (data.length !== width * height) {
    throw new RangeError(`PNG data must hold width·height = ${width * height} bytes, got ${data.length}`);
  }
  const ihdr = new Uint8Array(13);
  const view = new DataView(ihdr.buffer);
  view.setUint32(0, width);
  view.setUint32(4, height);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 0; // colour type: greyscale
  ihdr[10] = 0; // compression: deflate
  ihdr[11] = 0; // filter method 0
  ihdr[12] = 0; // no interlace
  // Each scanline starts with its filter type; 0 (none) keeps the writer trivial.
  const raw = new Uint8Array(height * (width + 1));
  for (let y = 0; y < height; y++) raw.set(data.subarray(y * width, (y + 1) * width), y * (width + 1) + 1);
  const idat = deflateSync(raw);
  const parts = [SIGNATURE, chunk("IHDR", ihdr), chunk("IDAT", idat), chunk("IEND", new Uint8Array(0))];
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let off = 0;
  for (const p of parts) {
    out.set(p, off);
    off += p.length;
  }
  return out;
}

/** length (4 bytes) · type (4) · data · CRC-32 of type and data (4), all big-endian. */
function chunk(type: string, body: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + body.length);
  const view = new DataView(out.buffer);
  view.setUint32(0, body.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(body, 8);
  view.setUint32(8 + body.length, crc32(out.subarray(4, 8 + body.length)));
  return out;
}
