// Next.js configuration. pg and pg-boss stay external so the server bundle loads
// them from node_modules (they use optional native bindings and dynamic requires).
const securityHeaders = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Referrer-Policy", value: "same-origin" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=()" },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  serverExternalPackages: ["pg", "pg-boss", "bcryptjs", "geotiff"],
  poweredByHeader: false,
  experimental: { authInterrupts: true },
  // `npm test` runs tsc over the whole repository (tests, fixtures, scripts) as its
  // own gate; the build does not repeat it.
  typescript: { ignoreBuildErrors: true },
  // Browsers still ask for /favicon.ico when a page is left before its <head> names the
  // icon; answer with our icon instead of a 404 (which the browser tests count as an error).
  async rewrites() {
    return [{ source: "/favicon.ico", destination: "/icon.svg" }];
  },
  // Pages get their Content-Security-Policy, with a per-request script nonce, from
  // src/proxy.ts. API answers are data, never documents: nothing in them may load or run.
  async headers() {
    return [
      { source: "/:path*", headers: securityHeaders },
      {
        source: "/api/:path*",
        headers: [{ key: "Content-Security-Policy", value: "default-src 'none'; frame-ancestors 'none'" }],
      },
    ];
  },
};

export default nextConfig;
