import type { Metadata } from "next";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { listApiClients } from "@/lib/api-clients/list-api-clients";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatUtc } from "@/app/components/format";
import { CreateApiClientForm, RevokeApiClientButton } from "@/app/(desk)/admin/api-clients/api-client-forms";

export const metadata: Metadata = { title: "API clients" };
export const dynamic = "force-dynamic";

export default async function ApiClientsPage() {
  const access = await requirePagePermission("api_clients.manage");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const clients = await listApiClients(db());
  return (
    <section aria-labelledby="api-clients-heading" className="space-y-4">
      <div>
        <h1 id="api-clients-heading" className="text-lg font-semibold">
          API clients
        </h1>
        <p className="text-sm text-ink-soft">
          Credentials for the scoring service and other machines. Each token is shown once when created; only its hash is kept. Deployment scripts can use{" "}
          <code className="font-mono text-xs">npm run api-client -- create --name &lt;name&gt; --scopes &lt;s1,s2&gt;</code>.
        </p>
      </div>
      <div className="panel overflow-x-auto">
        <table className="data-table" aria-label="API clients">
          <thead>
            <tr>
              <th>Name</th>
              <th>Token starts with</th>
              <th>Scopes</th>
              <th>Created</th>
              <th>Last used</th>
              <th>Status</th>
              <th>Change</th>
            </tr>
          </thead>
          <tbody>
            {clients.length === 0 && (
              <tr>
                <td colSpan={7} className="text-ink-soft">
                  No API clients yet.
                </td>
              </tr>
            )}
            {clients.map((client) => (
              <tr key={client.id} className={client.revokedAt ? "text-ink-faint" : ""}>
                <td className="font-mono text-xs">{client.name}</td>
                <td className="font-mono text-xs">{client.tokenPrefix}…</td>
                <td className="font-mono text-xs">{client.scopes.join(", ")}</td>
                <td>
                  {formatUtc(client.createdAt)}
                  {client.createdBy ? <span className="text-ink-soft"> by {client.createdBy}</span> : null}
                </td>
                <td>{client.lastUsedAt ? formatUtc(client.lastUsedAt) : "never"}</td>
                <td>{client.revokedAt ? `revoked ${formatUtc(client.revokedAt)}` : "active"}</td>
                <td>
                  <RevokeApiClientButton clientId={client.id} name={client.name} revoked={client.revokedAt !== null} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="panel max-w-3xl p-4">
        <CreateApiClientForm />
      </div>
    </section>
  );
}
