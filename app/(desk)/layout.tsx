import Link from "next/link";
import type { ReactNode } from "react";
import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { Caution } from "@/app/components/caution";
import { getCurrentUser, REQUEST_PATH_HEADER } from "@/lib/auth/current-user";
import { can, type Permission } from "@/lib/auth/permissions";
import { signInPathFor } from "@/lib/http/safe-next-path";
import { signOutAction } from "@/app/sign-out/actions";

// Each link shows only to roles that may open it; the pages check again on the server.
const pages: { href: string; label: string; permission: Permission }[] = [
  { href: "/queue", label: "Queue", permission: "queue.view" },
  { href: "/workload", label: "Workload", permission: "workload.view" },
  { href: "/model-health", label: "Model health", permission: "model_health.view" },
  { href: "/reviewer-quality", label: "Reviewer quality", permission: "reviewer_quality.view" },
  { href: "/audit", label: "Audit trail", permission: "audit.view" },
  { href: "/label-exports", label: "Label exports", permission: "label_exports.view" },
  { href: "/ingest", label: "Ingest log", permission: "ingest.view" },
  { href: "/settings", label: "Settings", permission: "settings.view" },
  { href: "/admin/users", label: "Users", permission: "users.manage" },
  { href: "/admin/api-clients", label: "API clients", permission: "api_clients.manage" },
];

export default async function DeskLayout({ children }: { children: ReactNode }) {
  const user = await getCurrentUser();
  if (!user) redirect(signInPathFor((await headers()).get(REQUEST_PATH_HEADER)));
  const visible = pages.filter((page) => can(user.role, page.permission));
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-rule bg-panel">
        <div className="mx-auto flex max-w-7xl items-center gap-6 px-4 py-2">
          <Link href="/queue" className="font-semibold tracking-tight text-accent-strong">
            Triage Desk
          </Link>
          <nav aria-label="Main" className="flex flex-wrap gap-4 text-sm">
            {visible.map((page) => (
              <Link key={page.href} href={page.href} className="text-ink-soft hover:text-ink">
                {page.label}
              </Link>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm">
            <Link href="/account" className="text-ink hover:underline" aria-label={`Your account: ${user.displayName}, ${user.role}`}>
              {user.displayName}
            </Link>
            <span className="rounded bg-accent-wash px-1.5 py-0.5 text-2xs font-semibold uppercase tracking-wide text-accent-strong">{user.role}</span>
            <form action={signOutAction}>
              <button type="submit" className="btn">
                Sign out
              </button>
            </form>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-4">{children}</main>
      <footer className="mx-auto w-full max-w-7xl px-4 pb-4">
        <Caution />
      </footer>
    </div>
  );
}
