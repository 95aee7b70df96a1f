/**
 * Optimistic page guard: no session → sign-in page. The real checks (role,
 * facility, expiry) happen again in every page, route handler and service;
 * route handlers under /api answer 401 JSON themselves, so they are not matched here.
 */
import NextAuth from "next-auth";
import { NextResponse } from "next/server";
import { authConfig } from "./server/auth/auth.config";

const { auth } = NextAuth(authConfig);

export const proxy = auth((req) => {
  if (req.auth?.user) return NextResponse.next();
  const hadCookie = req.cookies.getAll().some((c) => c.name.includes("authjs.session-token"));
  const url = new URL("/sign-in", req.nextUrl.origin);
  if (hadCookie) url.searchParams.set("reason", "expired");
  return NextResponse.redirect(url);
});

export const config = {
  // Everything except sign-in, invitation, unsubscribe and password-reset links (public: the token
  // is the credential), the reset request form, the API, Next's assets and public files.
  matcher: [
    "/((?!sign-in|invite/|unsubscribe/|forgot-password|reset-password/|api/|_next/|favicon.ico|robots.txt|.*\\.(?:png|svg|ico|woff2?)$).*)",
  ],
};
