import "@fontsource/inter/400.css";
import "@fontsource/inter/600.css";
import "@fontsource/roboto-mono/400.css";
import "./globals.css";
import type { Metadata } from "next";
import { connection } from "next/server";
import type { ReactNode } from "react";
import { Providers } from "./providers";

export const metadata: Metadata = {
  title: { default: "Beadbench", template: "%s · Beadbench" },
  description: "Bead-based PSF checks and refractive-index mismatch diagnosis for microscopy facilities.",
  icons: { icon: "/icon.svg" },
};

export default async function RootLayout({ children }: { children: ReactNode }) {
  // Render every page per request: its scripts carry that response's CSP nonce
  // (src/proxy.ts), which a page prerendered at build time could not know.
  await connection();
  return (
    <html lang="en">
      <body className="min-h-screen antialiased">
        <Providers>{children}</Providers>
      </body>
    </html>
  );
}
