import type { Metadata } from "next";
import { requirePagePermission } from "@/lib/auth/current-user";
import { NotAllowed } from "@/app/components/not-allowed";
import { ChangePasswordForm } from "@/app/(desk)/account/password-form";

export const metadata: Metadata = { title: "Account" };
export const dynamic = "force-dynamic";

export default async function AccountPage() {
  const access = await requirePagePermission("account.manage_own");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const { user } = access;
  return (
    <section aria-labelledby="account-heading" className="space-y-4">
      <h1 id="account-heading" className="text-lg font-semibold">
        Account
      </h1>
      <dl className="panel grid max-w-md grid-cols-[8rem_1fr] gap-x-3 gap-y-1 p-4 text-sm">
        <dt className="text-ink-soft">Name</dt>
        <dd>{user.displayName}</dd>
        <dt className="text-ink-soft">Email</dt>
        <dd className="font-mono text-xs">{user.email}</dd>
        <dt className="text-ink-soft">Role</dt>
        <dd>{user.role}</dd>
      </dl>
      <div className="panel max-w-md p-4">
        <ChangePasswordForm />
      </div>
    </section>
  );
}
