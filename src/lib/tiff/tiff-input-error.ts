/**
 * Stable error codes for TIFF input that cannot be read as a z-stack. The app maps
 * them to 4xx responses (`too_large` → 413; `not_tiff`, `unsupported_*` → 415; the
 * rest → 422).
 */
export type TiffErrorCode =
  | "not_tiff"
  | "truncated"
  | "corrupt_ifd"
  | "ifd_loop"
  | "corrupt_data"
  | "not_a_stack"
  | "multi_sample"
  | "inconsistent_pages"
  | "too_large"
  | "unsupported_sample_format"
  | "unsupported_compression"
  | "bad_metadata"
  | "bad_option";

/**
 * The one error type thrown by `lib/tiff` for bad or unsupported input files.
 *
 * @example
 * try { await readTiffStack(bytes); } catch (e) { if (e instanceof TiffInputError) console.log(e.code); }
 */
export class TiffInputError extends Error {
  /** Stable machine-readable kind (see {@link TiffErrorCode}). */
  readonly code: TiffErrorCode;
  /** Optional numbers behind the message (sizes, offsets, limits) for logs and UIs. */
  readonly details: Readonly<Record<string, number | string>>;

  /**
   * @param code - stable error code
   * @param message - human-readable message naming the offending values
   * @param details - optional numbers behind the message
   */
  constructor(code: TiffErrorCode, message: string, details: Record<string, number | string> = {}) {
    super(message);
    this.name = "TiffInputError";
    this.code = code;
    this.details = details;
  }
}
