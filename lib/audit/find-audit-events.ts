// Answers questions of the audit trail: by actor, action (or family of actions), alert and time,
// newest first with keyset paging on the event id (the order the chain was written in; stable
// however many events arrive while someone pages). The screen, GET /api/v1/audit/events, the CSV
// export and each alert's timeline all filter through resolveAuditFilter() + auditFilterSql().
import { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { auditActions, clearingActions, type AuditFilter, type AuditPage } from "@/lib/audit/schemas";
import { linkStagedAuditEvents } from "@/lib/audit/staged-audit-events";
import { AUDIT_EVENT_COLUMNS, type AuditEventRow } from "@/lib/audit/audit-event-row";

export interface AuditEventView {
  id: string;
  occurredAt: Date;
  actorType: "user" | "api_client" | "system";
  actorId: string | null;
  actorLabel: string;
  action: string;
  subjectType: string | null;
  subjectId: string | null;
  payload: unknown;
  requestId: string | null;
  ipAddress: string | null;
  prevHash: string;
  hash: string;
}

export interface ResolvedActor {
  type: "user" | "api_client";
  id: string;
  label: string;
}

export interface ResolvedAuditFilter {
  filter: AuditFilter;
  /** Null when the filter names no actor. Events match on actor id or on the label written at the time. */
  actor: { ids: string[]; labels: string[]; known: ResolvedActor[] } | null;
  /** Null when the filter names no action. */
  actions: { exact: string[] } | { prefix: string } | null;
  /** Null when the filter names no alert; `known` is empty when no alert has that id. */
  alert: { ids: string[]; externalIds: string[]; known: { id: string; externalId: string }[] } | null;
  fromTime: Date | null;
  /** Exclusive. */
  toTime: Date | null;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const DAY = /^\d{4}-\d{2}-\d{2}$/;

function instant(value: string, endOfDay: boolean): Date {
  if (DAY.test(value)) {
    const start = new Date(`${value}T00:00:00Z`);
    return endOfDay ? new Date(start.getTime() + 86_400_000) : start;
  }
  // An exact instant given as the upper bound is inclusive: the exclusive bound is one millisecond on.
  const exact = new Date(value);
  return endOfDay ? new Date(exact.getTime() + 1) : exact;
}

/** Turns the names a person types (e-mail, API client name, external id) into what the rows hold. */
export async function resolveAuditFilter(db: DbOrTx, filter: AuditFilter): Promise<ResolvedAuditFilter> {
  let actor: ResolvedAuditFilter["actor"] = null;
  if (filter.actor) {
    const given = filter.actor;
    const bare = given.startsWith("api:") ? given.slice(4) : given;
    const isId = UUID.test(given);
    const known = await db.$queryRaw<ResolvedActor[]>`
      SELECT 'user' AS type, id::text AS id, email AS label FROM users
       WHERE ${isId ? Prisma.sql`id = ${given}::uuid` : Prisma.sql`email = ${given.toLowerCase()}`}
      UNION ALL
      SELECT 'api_client', id::text, 'api:' || name FROM api_clients
       WHERE ${isId ? Prisma.sql`id = ${given}::uuid` : Prisma.sql`name = ${bare}`}`;
    const ids = new Set(known.map((entry) => entry.id));
    if (isId) ids.add(given.toLowerCase());
    // Labels too: system actors have no id, and a failed sign-in names only the e-mail that was tried.
    const labels = new Set([given, given.toLowerCase(), ...known.map((entry) => entry.label)]);
    if (!isId && !given.startsWith("api:") && !given.includes("@")) labels.add(`api:${given}`);
    actor = { ids: [...ids], labels: [...labels], known };
  }

  let actions: ResolvedAuditFilter["actions"] = null;
  if (filter.preset) actions = { exact: [...clearingActions] };
  else if (filter.action) {
    const family = /^([a-z_]+)(\.\*?)?$/.exec(filter.action);
    if (!family) actions = { exact: [filter.action] };
    else {
      // A family is expanded to its known actions, so the (action, id) index still serves it.
      const prefix = `${family[1]}.`;
      const members = auditActions.filter((action) => action.startsWith(prefix));
      actions = members.length > 0 ? { exact: members } : { prefix };
    }
  }

  let alert: ResolvedAuditFilter["alert"] = null;
  if (filter.alert) {
    const given = filter.alert;
    const known = UUID.test(given)
      ? await db.$queryRaw<{ id: string; externalId: string }[]>`SELECT id::text AS id, external_id AS "externalId" FROM alerts WHERE id = ${given}::uuid`
      : await db.$queryRaw<{ id: string; externalId: string }[]>`SELECT id::text AS id, external_id AS "externalId" FROM alerts WHERE external_id = ${given} ORDER BY received_at`;
    alert = {
      ids: UUID.test(given) ? [given.toLowerCase()] : known.map((entry) => entry.id),
      externalIds: UUID.test(given) ? known.map((entry) => entry.externalId) : [given],
      known,
    };
  }

  return {
    filter,
    actor,
    actions,
    alert,
    fromTime: filter.from ? instant(filter.from, false) : null,
    toTime: filter.to ? instant(filter.to, true) : null,
  };
}

/** The WHERE conditions of a resolved filter (always at least `TRUE`), for `audit_events`. */
export function auditFilterSql(resolved: ResolvedAuditFilter): Prisma.Sql {
  const conditions: Prisma.Sql[] = [];
  if (resolved.actor) {
    conditions.push(Prisma.sql`(actor_id = ANY(${resolved.actor.ids}::text[]) OR actor_label = ANY(${resolved.actor.labels}::text[]))`);
  }
  if (resolved.actions) {
    conditions.push(
      "prefix" in resolved.actions
        ? Prisma.sql`starts_with(action, ${resolved.actions.prefix})`
        : Prisma.sql`action = ANY(${resolved.actions.exact}::text[])`,
    );
  }
  if (resolved.alert) {
    // Each arm matches one index (see the migration 20261202020000_audit_trail_lookups).
    conditions.push(Prisma.sql`(
      (subject_type = 'alert' AND subject_id = ANY(${resolved.alert.ids}::text[]))
      OR (payload ? 'alertId' AND payload->>'alertId' = ANY(${resolved.alert.ids}::text[]))
      OR (action = 'label.received' AND payload->>'externalId' = ANY(${resolved.alert.externalIds}::text[])))`);
  }
  if (resolved.fromTime) conditions.push(Prisma.sql`occurred_at >= ${resolved.fromTime}`);
  if (resolved.toTime) conditions.push(Prisma.sql`occurred_at < ${resolved.toTime}`);
  return conditions.length === 0 ? Prisma.sql`TRUE` : Prisma.join(conditions, " AND ");
}

export function toAuditEventView(row: AuditEventRow): AuditEventView {
  return {
    id: row.id.toString(),
    occurredAt: row.occurred_at,
    actorType: row.actor_type,
    actorId: row.actor_id,
    actorLabel: row.actor_label,
    action: row.action,
    subjectType: row.subject_type,
    subjectId: row.subject_id,
    payload: row.payload,
    requestId: row.request_id,
    ipAddress: row.ip_address,
    prevHash: row.prev_hash,
    hash: row.hash,
  };
}

/** Reads events of a resolved filter in id order; the building block of the page, the export and the timeline. */
export async function selectAuditEvents(
  db: DbOrTx,
  resolved: ResolvedAuditFilter,
  options: { order: "asc" | "desc"; afterId?: string; beforeId?: string; limit: number },
): Promise<AuditEventView[]> {
  const bounds: Prisma.Sql[] = [auditFilterSql(resolved)];
  if (options.afterId) bounds.push(Prisma.sql`id > ${BigInt(options.afterId)}`);
  if (options.beforeId) bounds.push(Prisma.sql`id < ${BigInt(options.beforeId)}`);
  const rows = await db.$queryRaw<AuditEventRow[]>`
    SELECT ${AUDIT_EVENT_COLUMNS} FROM audit_events
     WHERE ${Prisma.join(bounds, " AND ")}
     ORDER BY id ${options.order === "asc" ? Prisma.sql`ASC` : Prisma.sql`DESC`}
     LIMIT ${options.limit}`;
  return rows.map(toAuditEventView);
}

/** Beyond this many matches the screen says "more than N" instead of counting on. */
export const AUDIT_COUNT_CAP = 10_000;

export interface AuditEventsPage {
  resolved: ResolvedAuditFilter;
  /** Newest first. */
  events: AuditEventView[];
  /** `before` for the next (older) page, or null at the oldest. */
  olderCursor: string | null;
  /** `after` for the previous (newer) page, or null at the newest. */
  newerCursor: string | null;
  matched: { count: number; capped: boolean };
}

export interface FindAuditEventsOptions {
  filter: AuditFilter;
  page: AuditPage;
}

export async function findAuditEvents(db: DbOrTx, options: FindAuditEventsOptions): Promise<AuditEventsPage> {
  await linkStagedAuditEvents(db);
  const resolved = await resolveAuditFilter(db, options.filter);
  const { limit, before, after } = options.page;
  let events: AuditEventView[];
  let olderCursor: string | null = null;
  let newerCursor: string | null = null;
  const exists = async (bound: Prisma.Sql) => {
    const [row] = await db.$queryRaw<{ found: boolean }[]>`
      SELECT EXISTS (SELECT 1 FROM audit_events WHERE ${auditFilterSql(resolved)} AND ${bound}) AS found`;
    return row.found;
  };
  if (after) {
    // Walking towards the newest: read upwards, then show newest first like every other page.
    const rows = await selectAuditEvents(db, resolved, { order: "asc", afterId: after, limit: limit + 1 });
    events = rows.slice(0, limit).reverse();
    if (rows.length > limit) newerCursor = events[0].id;
    if (events.length > 0 && (await exists(Prisma.sql`id < ${BigInt(events[events.length - 1].id)}`))) olderCursor = events[events.length - 1].id;
  } else {
    const rows = await selectAuditEvents(db, resolved, { order: "desc", beforeId: before, limit: limit + 1 });
    events = rows.slice(0, limit);
    if (rows.length > limit) olderCursor = events[events.length - 1].id;
    if (events.length > 0 && before && (await exists(Prisma.sql`id > ${BigInt(events[0].id)}`))) newerCursor = events[0].id;
  }
  const [counted] = await db.$queryRaw<{ count: number }[]>`
    SELECT count(*)::int AS count FROM (SELECT 1 FROM audit_events WHERE ${auditFilterSql(resolved)} LIMIT ${AUDIT_COUNT_CAP + 1}) AS capped`;
  return {
    resolved,
    events,
    olderCursor,
    newerCursor,
    matched: { count: Math.min(counted.count, AUDIT_COUNT_CAP), capped: counted.count > AUDIT_COUNT_CAP },
  };
}
