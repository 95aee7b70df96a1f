/**
 * Runs before every page. It gives each response its Content-Security-Policy with a
 * fresh script nonce (Next reads the nonce from the request's policy header and puts
 * it on its own scripts), and it is the optimistic page guard: no session → sign-in
 * page. The real checks (role, facility, expiry) happen again in every page, route
 * handler and service; route handlers under /api answer 401 JSON themselves and get
 * their headers from next.config.mjs, so they are not matched here.
 */
import NextAuth from "next-auth";
import { NextResponse, type NextRequest } from "next/server";
import { authConfig } from "./server/auth/auth.config";
import { newNonce, pagePolicy } from "./server/http/content-security-policy";

const { auth } = NextAuth(authConfig);

/** Pages anyone may open: the token in an invitation, reset or unsubscribe link is the credential. */
const PUBLIC_PAGE = /^\/(?:sign-in|forgot-password|invite\/|reset-password\/|unsubscribe\/)/;

function withPolicy(req: NextRequest): NextResponse {
  const policy = pagePolicy(newNonce());
  const headers = new Headers(req.headers);
  headers.set("content-security-policy", policy);
  const res = NextResponse.next({ request: { headers } });
  res.headers.set("content-security-policy", policy);
  return res;
}

export const proxy = auth((req) => {
  if (req.auth?.user || PUBLIC_PAGE.test(req.nextUrl.pathname)) return withPolicy(req);
  const hadCookie = req.cookies.getAll().some((c) => c.name.includes("authjs.session-token"));
  const url = new URL("/sign-in", req.nextUrl.origin);
  if (hadCookie) url.searchParams.set("reason", "expired");
  return NextResponse.redirect(url);
});

export const config = {
  // Every page; not the API, Next's assets or public files.
  matcher: ["/((?!api/|_next/|favicon.ico|robots.txt|.*\\.(?:png|svg|ico|woff2?)$).*)"],
};
