import Link from "next/link";
import type { ReactNode } from "react";
import { Caution } from "@/app/components/caution";

const pages = [
  { href: "/queue", label: "Queue" },
  { href: "/workload", label: "Workload" },
  { href: "/model-health", label: "Model health" },
  { href: "/reviewer-quality", label: "Reviewer quality" },
  { href: "/audit", label: "Audit trail" },
  { href: "/label-exports", label: "Label exports" },
  { href: "/ingest", label: "Ingest log" },
  { href: "/settings", label: "Settings" },
];

export default function DeskLayout({ children }: { children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-rule bg-panel">
        <div className="mx-auto flex max-w-7xl items-center gap-6 px-4 py-2">
          <Link href="/queue" className="font-semibold tracking-tight text-accent-strong">
            Triage Desk
          </Link>
          <nav aria-label="Main" className="flex flex-wrap gap-4 text-sm">
            {pages.map((page) => (
              <Link key={page.href} href={page.href} className="text-ink-soft hover:text-ink">
                {page.label}
              </Link>
            ))}
          </nav>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-4">{children}</main>
      <footer className="mx-auto w-full max-w-7xl px-4 pb-4">
        <Caution />
      </footer>
    </div>
  );
}
