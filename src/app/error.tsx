"use client";

export default function ErrorPage({ reset }: { error: Error; reset: () => void }) {
  return (
    <main className="mx-auto max-w-lg px-6 py-20 text-center">
      <h1>Something went wrong</h1>
      <p className="mt-3 text-sm text-ink-soft">
        The page could not be shown. If the database was restarting, trying again usually works.
      </p>
      <button className="btn mt-6" onClick={reset}>
        Try again
      </button>
    </main>
  );
}
