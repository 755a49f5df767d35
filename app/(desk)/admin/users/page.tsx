import type { Metadata } from "next";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { listUsers } from "@/lib/users/list-users";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatUtc } from "@/app/components/format";
import { CreateUserForm, UserRowActions } from "@/app/(desk)/admin/users/user-forms";

export const metadata: Metadata = { title: "Users" };
export const dynamic = "force-dynamic";

export default async function UsersPage() {
  const access = await requirePagePermission("users.manage");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const users = await listUsers(db());
  const activeAdmins = users.filter((user) => user.active && user.role === "admin").length;
  return (
    <section aria-labelledby="users-heading" className="space-y-4">
      <div>
        <h1 id="users-heading" className="text-lg font-semibold">
          Users
        </h1>
        <p className="text-sm text-ink-soft">
          Roles decide what each person may see and do. Deactivating someone ends their sessions at once. There is always at least one active admin
          {activeAdmins === 1 ? " (now exactly one, who can be neither deactivated nor demoted)" : ""}.
        </p>
      </div>
      <div className="panel overflow-x-auto">
        <table className="data-table" aria-label="People who can sign in">
          <thead>
            <tr>
              <th>Name</th>
              <th>Email</th>
              <th>Role</th>
              <th>Status</th>
              <th className="num">Open sessions</th>
              <th>Last sign-in</th>
              <th>Change</th>
            </tr>
          </thead>
          <tbody>
            {users.map((user) => (
              <tr key={user.id} className={user.active ? "" : "text-ink-faint"}>
                <td>{user.displayName}</td>
                <td className="font-mono text-xs">{user.email}</td>
                <td>{user.role}</td>
                <td>{user.active ? "active" : "deactivated"}</td>
                <td className="num">{user.openSessions}</td>
                <td>{user.lastSignInAt ? formatUtc(user.lastSignInAt) : "—"}</td>
                <td>
                  <UserRowActions userId={user.id} name={user.displayName} role={user.role} active={user.active} isSelf={user.id === access.user.id} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="panel max-w-3xl p-4">
        <CreateUserForm />
      </div>
    </section>
  );
}
