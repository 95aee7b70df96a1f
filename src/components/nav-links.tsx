"use client";
import Link from "next/link";
import { usePathname } from "next/navigation";

export function NavLinks({ items }: { items: Array<{ href: string; label: string }> }) {
  const path = usePathname();
  return (
    <nav aria-label="Main" className="flex gap-1">
      {items.map((i) => {
        const active = path === i.href || path.startsWith(`${i.href}/`);
        return (
          <Link
            key={i.href}
            href={i.href}
            aria-current={active ? "page" : undefined}
            className={`rounded-md px-2.5 py-1.5 text-sm no-underline ${
              active ? "bg-accent-soft text-accent-strong font-semibold" : "text-ink-soft hover:bg-paper"
            }`}
          >
            {i.label}
          </Link>
        );
      })}
    </nav>
  );
}
