import type { ReactNode } from "react";

/** The centred card of the pages people open without signing in (links from mail, password reset). */
export function PublicCard({ children }: { children: ReactNode }) {
  return (
    <main className="flex min-h-screen items-center justify-center px-4">
      <section className="w-full max-w-md rounded-xl border border-paper-line bg-paper-card p-8 shadow-sm">
        <div className="mb-6 flex items-center gap-2">
          <img src="/icon.svg" alt="" width={24} height={24} />
          <span className="font-semibold">Beadbench</span>
        </div>
        {children}
      </section>
    </main>
  );
}
