/**
 * Normalise the reader's input to a byte view.
 */
import { TiffInputError } from "./tiff-input-error";

/**
 * View an `ArrayBuffer` or `Uint8Array` as a `Uint8Array` without copying.
 *
 * @param input - file contents
 * @returns a byte view of the same memory
 * @throws {TiffInputError} `bad_option` when `input` is neither
 *
 * @example
 * toBytes(new ArrayBuffer(8)).length; // 8
 */
export function toBytes(input: ArrayBuffer | Uint8Array): Uint8Array {
  if (input instanceof Uint8Array) return input;
  if (input instanceof ArrayBuffer) return new Uint8Array(input);
  throw new TiffInputError("bad_option", "The TIFF input must be an ArrayBuffer or a Uint8Array.");
}
