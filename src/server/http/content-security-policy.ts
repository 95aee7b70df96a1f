/**
 * The Content-Security-Policy of every page. Scripts run only with this response's
 * nonce ('strict-dynamic' lets those scripts load Next's chunks), so an injected
 * <script> or inline event handler never runs. Styles keep 'unsafe-inline': the
 * charting library writes inline styles at run time, and styles cannot run code.
 * `next dev` needs eval for its error overlay; production builds never do.
 */
export function pagePolicy(nonce: string, dev = process.env.NODE_ENV === "development"): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic'${dev ? " 'unsafe-eval'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
}

/** A fresh, unguessable nonce per response (128 random bits, base64). */
export function newNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  return btoa(String.fromCharCode(...bytes));
}
