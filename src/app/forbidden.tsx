import Link from "next/link";

export default function Forbidden() {
  return (
    <main className="mx-auto max-w-lg px-6 py-20 text-center">
      <p className="font-mono text-sm text-ink-faint">403</p>
      <h1 className="mt-2">This part of Beadbench is not open to your role</h1>
      <p className="mt-3 text-sm text-ink-soft">
        Your facility admin decides who can change settings, people and tolerances. If you need access, ask
        them.
      </p>
      <Link href="/dashboard" className="btn-quiet mt-6">
        Back to the dashboard
      </Link>
    </main>
  );
}
