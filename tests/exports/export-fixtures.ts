// Small factories for the label-export tests: valid rows with overrides, inserted with plain SQL so
// these tests depend only on the schema, not on other domains' code.
import { randomUUID } from "node:crypto";
import { PassThrough } from "node:stream";
import type pg from "pg";
import type { ApiClientActor, UserActor } from "@/lib/auth/actor";
import type { LabelExportChoicesInput } from "@/lib/exports/schemas";

export const DAY = 86_400_000;
export const at = (iso: string) => new Date(iso);
export const daysAfter = (date: Date, days: number) => new Date(date.getTime() + days * DAY);

export interface Person {
  id: string;
  email: string;
  displayName: string;
  pseudonym: string;
  actor: UserActor;
}

export async function createPerson(pool: pg.Pool, overrides: { role?: UserActor["role"]; displayName?: string; email?: string } = {}): Promise<Person> {
  const role = overrides.role ?? "analyst";
  const email = overrides.email ?? `${role}.${randomUUID().slice(0, 8)}@example.org`;
  const displayName = overrides.displayName ?? `Reviewer ${randomUUID().slice(0, 4)}`;
  const { rows } = await pool.query<{ id: string; pseudonym: string }>(
    "INSERT INTO users (email, display_name, role) VALUES ($1, $2, $3) RETURNING id, pseudonym",
    [email, displayName, role],
  );
  return { id: rows[0].id, email, displayName, pseudonym: rows[0].pseudonym, actor: { type: "user", id: rows[0].id, email, displayName, role, sessionId: null } };
}

export async function createApiClientActor(pool: pg.Pool, name = `exports-${randomUUID().slice(0, 8)}`): Promise<ApiClientActor> {
  const { rows } = await pool.query<{ id: string }>(
    "INSERT INTO api_clients (name, token_hash, token_prefix, scopes) VALUES ($1, $2, 'td_test', ARRAY['exports:read']) RETURNING id",
    [name, randomUUID()],
  );
  return { type: "api_client", id: rows[0].id, name, scopes: ["exports:read"] };
}

export async function createModelVersion(pool: pg.Pool, overrides: { modelName?: string; version?: string } = {}): Promise<{ id: string; modelName: string; version: string }> {
  const modelName = overrides.modelName ?? "card-gbm";
  const version = overrides.version ?? randomUUID().slice(0, 8);
  const { rows } = await pool.query<{ id: string }>(
    "INSERT INTO model_versions (model_name, version, score_kind, alert_threshold) VALUES ($1, $2, 'probability', 0.5) RETURNING id",
    [modelName, version],
  );
  return { id: rows[0].id, modelName, version };
}

export interface AlertOverrides {
  externalId?: string;
  occurredAt: Date;
  receivedAt?: Date;
  amountMinor?: number;
  currency?: string;
  channel?: string;
  merchantCategoryCode?: string;
  merchantCountry?: string;
  score?: number;
  probability?: number | null;
  belowTheLine?: boolean;
  inclusionProbability?: number | null;
  state?: "waiting" | "in_review" | "second_review" | "closed";
  finalOutcome?: string | null;
  closedAt?: Date | null;
  calibrationMapId?: string | null;
}

export async function createAlert(pool: pg.Pool, modelVersionId: string, overrides: AlertOverrides): Promise<{ id: string; externalId: string }> {
  const externalId = overrides.externalId ?? `tx-${randomUUID().slice(0, 12)}`;
  const belowTheLine = overrides.belowTheLine ?? false;
  const state = overrides.state ?? "waiting";
  const { rows } = await pool.query<{ id: string }>(
    `INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                         merchant_country, entity_ref, model_version_id, score, probability, below_the_line, inclusion_probability,
                         state, closed_at, final_outcome, calibration_map_id)
     VALUES ($1, md5($1), $2, $3, $4, $5, $6, $7, $8, 'tok_test', $9, $10, $11, $12, $13, $14, $15, $16, $17)
     RETURNING id`,
    [
      externalId,
      overrides.receivedAt ?? new Date(overrides.occurredAt.getTime() + 60_000),
      overrides.occurredAt,
      overrides.amountMinor ?? 12_345,
      overrides.currency ?? "EUR",
      overrides.channel ?? "card_not_present",
      overrides.merchantCategoryCode ?? "5411",
      overrides.merchantCountry ?? "DE",
      modelVersionId,
      overrides.score ?? 0.8,
      overrides.probability === undefined ? 0.4 : overrides.probability,
      belowTheLine,
      belowTheLine ? (overrides.inclusionProbability ?? 0.05) : null,
      state,
      state === "closed" ? (overrides.closedAt ?? new Date(overrides.occurredAt.getTime() + 3_600_000)) : null,
      state === "closed" ? (overrides.finalOutcome ?? "legitimate") : null,
      overrides.calibrationMapId ?? null,
    ],
  );
  return { id: rows[0].id, externalId };
}

export async function createOutcome(
  pool: pg.Pool,
  alertId: string,
  reviewer: Person,
  options: { outcome: "confirmed_fraud" | "legitimate" | "inconclusive"; closedAt: Date; round?: 1 | 2; origin?: "screen" | "imported" },
): Promise<void> {
  await pool.query(
    `INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds, origin)
     VALUES ($1, $2, $3, 'Test reason', $4, $5, $5, 0, $6)`,
    [alertId, options.round ?? 1, options.outcome, reviewer.id, options.closedAt, options.origin ?? "screen"],
  );
}

export async function createLabel(
  pool: pg.Pool,
  alert: { id: string; externalId: string },
  options: { label: "fraud" | "genuine"; source: "chargeback" | "customer_report" | "analyst"; observedAt: Date; receivedAt: Date; reference?: string },
): Promise<void> {
  await pool.query(
    `INSERT INTO labels (alert_external_id, alert_id, label, source, observed_at, received_at, reference)
     VALUES ($1, $2, $3, $4, $5, $6, $7)`,
    [alert.externalId, alert.id, options.label, options.source, options.observedAt, options.receivedAt, options.reference ?? randomUUID()],
  );
}

export async function createCalibrationMap(pool: pg.Pool, modelVersionId: string, fittedAt: Date): Promise<string> {
  const { rows } = await pool.query<{ id: string }>(
    `INSERT INTO calibration_maps (model_version_id, fitted_at, label_count, positive_count, brier_score, score_points, probability_points)
     VALUES ($1, $2, 200, 20, 0.1, ARRAY[0.1, 0.9], ARRAY[0.05, 0.6]) RETURNING id`,
    [modelVersionId, fittedAt],
  );
  return rows[0].id;
}

/** Choices with the defaults a test usually wants; every test passes asOf explicitly. */
export function choicesFor(modelVersionId: string, overrides: Partial<LabelExportChoicesInput> & { asOf: Date }): LabelExportChoicesInput {
  return {
    modelVersionIds: [modelVersionId],
    occurredFrom: at("2025-01-01T00:00:00Z"),
    occurredTo: at("2027-01-01T00:00:00Z"),
    maturityDays: 0,
    keepInconclusive: false,
    keepUnreviewed: false,
    includeBelowTheLine: true,
    format: "csv",
    ...overrides,
  };
}

/** A stream that collects what is written to it. */
export function collectingSink(): { sink: PassThrough; bytes: () => Buffer; text: () => string } {
  const sink = new PassThrough();
  const chunks: Buffer[] = [];
  sink.on("data", (chunk: Buffer) => chunks.push(chunk));
  return { sink, bytes: () => Buffer.concat(chunks), text: () => Buffer.concat(chunks).toString("utf8") };
}

/** RFC 4180 reader for the tests (quoted fields, doubled quotes, CRLF inside quotes). */
export function parseCsv(text: string): string[][] {
  const records: string[][] = [];
  let field = "";
  let record: string[] = [];
  let quoted = false;
  for (let index = 0; index < text.length; index += 1) {
    const char = text[index];
    if (quoted) {
      if (char === '"' && text[index + 1] === '"') {
        field += '"';
        index += 1;
      } else if (char === '"') quoted = false;
      else field += char;
    } else if (char === '"') quoted = true;
    else if (char === ",") {
      record.push(field);
      field = "";
    } else if (char === "\r" && text[index + 1] === "\n") {
      record.push(field);
      records.push(record);
      record = [];
      field = "";
      index += 1;
    } else field += char;
  }
  if (field !== "" || record.length > 0) {
    record.push(field);
    records.push(record);
  }
  return records;
}

/** CSV text → objects keyed by the header. */
export function csvObjects(text: string): Record<string, string>[] {
  const [header, ...records] = parseCsv(text);
  return records.map((record) => Object.fromEntries(header.map((name, index) => [name, record[index]])));
}
