import Link from "next/link";
import type { Role } from "@/lib/auth/permissions";

/** What a page shows a signed-in person whose role does not include it. The refusal was already
 * checked and recorded on the server (requirePagePermission); this only says so plainly. */
export function NotAllowed({ role }: { role: Role }) {
  return (
    <section aria-labelledby="not-allowed-heading" className="panel mx-auto mt-8 max-w-lg space-y-3 p-6">
      <h1 id="not-allowed-heading" className="text-lg font-semibold">
        Not allowed
      </h1>
      <p className="text-sm text-ink-soft">
        Your role ({role}) does not include this page. If you need it for your work, ask an admin to change your role.
      </p>
      <p className="text-sm">
        <Link href="/queue" className="text-accent underline">
          Back to the queue
        </Link>
      </p>
    </section>
  );
}
