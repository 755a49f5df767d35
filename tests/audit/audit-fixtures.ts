// Small factories for the audit tests: valid rows with overrides, written with plain SQL so
// the tests depend only on the schema, not on other domains' code.
import { randomUUID } from "node:crypto";
import type pg from "pg";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditEventInput } from "@/lib/audit/schemas";

export async function createUser(pool: pg.Pool, overrides: { email?: string; role?: string; displayName?: string } = {}): Promise<{ id: string; email: string; actor: AuditActor }> {
  const email = overrides.email ?? `reviewer.${randomUUID().slice(0, 8)}@example.org`;
  const { rows } = await pool.query<{ id: string }>(
    "INSERT INTO users (email, display_name, role) VALUES ($1, $2, $3) RETURNING id",
    [email, overrides.displayName ?? "Test Reviewer", overrides.role ?? "analyst"],
  );
  return { id: rows[0].id, email, actor: { type: "user", id: rows[0].id, label: email } };
}

export async function createApiClient(pool: pg.Pool, name: string): Promise<{ id: string; actor: AuditActor }> {
  const { rows } = await pool.query<{ id: string }>(
    "INSERT INTO api_clients (name, token_hash, token_prefix, scopes) VALUES ($1, $2, 'td_test', ARRAY['alerts:write']) RETURNING id",
    [name, randomUUID()],
  );
  return { id: rows[0].id, actor: { type: "api_client", id: rows[0].id, label: `api:${name}` } };
}

let modelVersionId: string | undefined;

export async function createAlerts(pool: pg.Pool, count: number, prefix = "TX"): Promise<{ id: string; externalId: string }[]> {
  if (!modelVersionId) {
    const { rows } = await pool.query<{ id: string }>(
      `INSERT INTO model_versions (model_name, version, score_kind, alert_threshold) VALUES ('card-gbm', $1, 'probability', 0.5) RETURNING id`,
      [randomUUID().slice(0, 8)],
    );
    modelVersionId = rows[0].id;
  }
  const { rows } = await pool.query<{ id: string; external_id: string }>(
    `INSERT INTO alerts (external_id, content_hash, occurred_at, amount_minor, currency, channel, merchant_category_code,
                         merchant_country, entity_ref, model_version_id, score, priority)
     SELECT $1 || '-' || lpad(n::text, 6, '0'), md5(n::text), now(), 1000 + n, 'EUR', 'card_not_present', '5411', 'DE',
            'card-token-' || n, $2, 0.9, n
       FROM generate_series(1, $3::int) AS n
     RETURNING id, external_id`,
    [`${prefix}-${randomUUID().slice(0, 6)}`, modelVersionId, count],
  );
  return rows.map((row) => ({ id: row.id, externalId: row.external_id }));
}

/** Appends `count` settings.changed events, each in its own transaction. */
export async function recordSettingsEvents(prisma: PrismaClient, actor: AuditActor, count: number): Promise<bigint[]> {
  const ids: bigint[] = [];
  for (let index = 0; index < count; index += 1) {
    const event: AuditEventInput = { action: "settings.changed", payload: { key: "queue", before: { step: index }, after: { step: index + 1 } } };
    const { id } = await prisma.$transaction((tx) => recordAuditEvent(tx, { actor, event, subject: { type: "settings", id: "queue" } }));
    ids.push(id);
  }
  return ids;
}

/** Runs `sql` on the audit table with its append-only triggers switched off, as the owner can. */
export async function withTriggersDisabled(pool: pg.Pool, sql: string, values: unknown[] = []): Promise<void> {
  const client = await pool.connect();
  try {
    await client.query("BEGIN");
    await client.query("ALTER TABLE audit_events DISABLE TRIGGER USER");
    await client.query(sql, values);
    await client.query("ALTER TABLE audit_events ENABLE TRIGGER USER");
    await client.query("COMMIT");
  } catch (error) {
    await client.query("ROLLBACK");
    throw error;
  } finally {
    client.release();
  }
}
