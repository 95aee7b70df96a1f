import Link from "next/link";

export default function NotFound() {
  return (
    <main className="mx-auto max-w-lg px-6 py-20 text-center">
      <p className="font-mono text-sm text-ink-faint">404</p>
      <h1 className="mt-2">Nothing here</h1>
      <p className="mt-3 text-sm text-ink-soft">
        The page does not exist, or it belongs to a facility you are not part of.
      </p>
      <Link href="/dashboard" className="btn-quiet mt-6">
        Back to the dashboard
      </Link>
    </main>
  );
}
