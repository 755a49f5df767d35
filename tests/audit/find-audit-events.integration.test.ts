import { beforeAll, describe, expect, it } from "vitest";
import { parseAuditQuery } from "@/lib/audit/audit-query";
import { findAuditEvents } from "@/lib/audit/find-audit-events";
import { listAlertAuditEvents } from "@/lib/audit/list-alert-audit-events";
import { recordAuditEvent, type RecordAuditEventOptions } from "@/lib/audit/record-audit-event";
import { recordAuditView } from "@/lib/audit/record-audit-view";
import type { AuditActor } from "@/lib/audit/schemas";
import { AppError } from "@/lib/errors";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlerts, createApiClient, createUser } from "@/tests/audit/audit-fixtures";

const database = await useTestDatabase();
const { prisma, pool } = database;

const append = (options: RecordAuditEventOptions) => prisma.$transaction((tx) => recordAuditEvent(tx, options));
const at = (iso: string) => new Date(iso);

let dana: Awaited<ReturnType<typeof createUser>>;
let eli: Awaited<ReturnType<typeof createUser>>;
let supervisor: Awaited<ReturnType<typeof createUser>>;
let scoring: Awaited<ReturnType<typeof createApiClient>>;
let alerts: { id: string; externalId: string }[];
const lease: AuditActor = { type: "system", id: null, label: "lease-sweeper" };

function outcome(alert: { id: string; externalId: string }, value: "legitimate" | "confirmed_fraud", sentToSecondReview = false) {
  return {
    action: "outcome.recorded" as const,
    payload: { alertId: alert.id, externalId: alert.externalId, outcome: value, reason: "matches the customer's travel", round: 1, handlingSeconds: 240, origin: "screen" as const, sentToSecondReview },
  };
}

beforeAll(async () => {
  dana = await createUser(pool, { email: "dana.reviewer@example.org" });
  eli = await createUser(pool, { email: "eli.reviewer@example.org" });
  supervisor = await createUser(pool, { email: "sam.supervisor@example.org", role: "supervisor" });
  scoring = await createApiClient(pool, "scoring-svc");
  alerts = await createAlerts(pool, 3, "FIND");
  const [a1, a2, a3] = alerts;
  const subjectOf = (alert: { id: string }) => ({ type: "alert", id: alert.id });
  await append({ actor: scoring.actor, occurredAt: at("2026-11-01T08:00:00Z"), event: { action: "ingest.batch_received", payload: { kind: "alerts", channel: "api", rows: 3, accepted: 3, duplicate: 0, conflict: 0, rejected: 0 } } });
  await append({ actor: dana.actor, occurredAt: at("2026-11-02T09:00:00Z"), subject: subjectOf(a1), event: { action: "alert.claimed", payload: { alertId: a1.id, externalId: a1.externalId, leaseExpiresAt: "2026-11-02T09:15:00Z", how: "take_next" } } });
  await append({ actor: dana.actor, occurredAt: at("2026-11-02T09:05:00Z"), subject: subjectOf(a1), event: outcome(a1, "legitimate", true) });
  await append({ actor: eli.actor, occurredAt: at("2026-11-03T10:00:00Z"), subject: subjectOf(a1), event: { action: "second_review.confirmed", payload: { alertId: a1.id, externalId: a1.externalId, firstOutcome: "legitimate", secondOutcome: "legitimate" } } });
  await append({ actor: eli.actor, occurredAt: at("2026-11-04T11:00:00Z"), subject: subjectOf(a2), event: { action: "alert.claimed", payload: { alertId: a2.id, externalId: a2.externalId, leaseExpiresAt: "2026-11-04T11:15:00Z", how: "direct" } } });
  await append({ actor: eli.actor, occurredAt: at("2026-11-04T11:04:00Z"), subject: subjectOf(a2), event: outcome(a2, "legitimate") });
  await append({ actor: dana.actor, occurredAt: at("2026-11-10T23:59:00Z"), subject: subjectOf(a3), event: outcome(a3, "confirmed_fraud") });
  // Written without a subject: the timeline must still find it by the alert id in the payload.
  await append({ actor: lease, occurredAt: at("2026-11-11T07:00:00Z"), event: { action: "alert.lease_expired", payload: { alertId: a3.id, externalId: a3.externalId, heldBy: dana.id } } });
  // A chargeback names the alert only by its external id.
  await append({ actor: scoring.actor, occurredAt: at("2026-12-01T12:00:00Z"), event: { action: "label.received", payload: { externalId: a2.externalId, label: "fraud", source: "chargeback", matched: true } } });
  await append({ actor: supervisor.actor, occurredAt: at("2026-12-01T13:00:00Z"), subject: { type: "settings", id: "queue" }, event: { action: "settings.changed", payload: { key: "queue", before: { order: "expected_loss" }, after: { order: "expected_loss_per_minute" } } } });
});

async function find(query: Record<string, string>) {
  const { filter, page } = parseAuditQuery(query);
  return findAuditEvents(prisma, { filter, page });
}
const actionsOf = (result: Awaited<ReturnType<typeof find>>) => result.events.map((event) => `${event.action} by ${event.actorLabel}`);

describe("the audit trail answers its two questions with one filter each", () => {
  it("who cleared this alert: by its external id, the first outcome and the second review, newest first", async () => {
    const result = await find({ preset: "cleared_alert", alert: alerts[0].externalId });
    expect(actionsOf(result)).toEqual(["second_review.confirmed by eli.reviewer@example.org", "outcome.recorded by dana.reviewer@example.org"]);
    expect(result.resolved.alert?.known).toEqual([alerts[0]]);
  });

  it("who cleared this alert: by its internal id too", async () => {
    const result = await find({ preset: "cleared_alert", alert: alerts[0].id.toUpperCase() });
    expect(result.events).toHaveLength(2);
  });

  it("what did this reviewer clear between two dates, the end day included, whatever the e-mail's case", async () => {
    const firstWeek = await find({ preset: "cleared_by", actor: "Dana.Reviewer@example.org", from: "2026-11-01", to: "2026-11-09" });
    expect(actionsOf(firstWeek)).toEqual(["outcome.recorded by dana.reviewer@example.org"]);
    const throughTheTenth = await find({ preset: "cleared_by", actor: dana.email, from: "2026-11-01", to: "2026-11-10" });
    expect(throughTheTenth.events.map((event) => (event.payload as { externalId: string }).externalId)).toEqual([alerts[2].externalId, alerts[0].externalId]);
    expect(throughTheTenth.resolved.actor?.known).toEqual([{ type: "user", id: dana.id, label: dana.email }]);
  });

  it("an exact instant as the end is inclusive", async () => {
    const result = await find({ preset: "cleared_by", actor: dana.id, to: "2026-11-02T09:05:00Z" });
    expect(result.events).toHaveLength(1);
  });
});

describe("filters", () => {
  it("finds an API client by name, by api:name and by id", async () => {
    for (const actor of ["scoring-svc", "api:scoring-svc", scoring.id]) {
      expect(actionsOf(await find({ actor })), actor).toEqual(["label.received by api:scoring-svc", "ingest.batch_received by api:scoring-svc"]);
    }
  });

  it("finds a system actor by its label", async () => {
    expect(actionsOf(await find({ actor: "lease-sweeper" }))).toEqual(["alert.lease_expired by lease-sweeper"]);
  });

  it("takes an action or a family of actions", async () => {
    expect((await find({ action: "alert.claimed" })).events).toHaveLength(2);
    expect((await find({ action: "second_review.*" })).events).toHaveLength(1);
    expect((await find({ action: "second_review" })).events).toHaveLength(1);
    expect((await find({ action: "alert." })).events).toHaveLength(3);
    expect((await find({ action: "retired_family.*" })).events).toHaveLength(0);
  });

  it("an alert's events include those that name it only in the payload or by external id", async () => {
    expect((await find({ alert: alerts[1].id })).events.map((event) => event.action)).toEqual(["label.received", "outcome.recorded", "alert.claimed"]);
    expect((await find({ alert: alerts[2].externalId })).events.map((event) => event.action)).toEqual(["alert.lease_expired", "outcome.recorded"]);
  });

  it("an alert that does not exist matches nothing and says so", async () => {
    const result = await find({ alert: "NO-SUCH-ALERT" });
    expect(result.events).toEqual([]);
    expect(result.resolved.alert?.known).toEqual([]);
    expect(result.matched).toEqual({ count: 0, capped: false });
  });

  it("combines filters with AND and counts the matches", async () => {
    const result = await find({ actor: eli.email, action: "alert.claimed", from: "2026-11-04", to: "2026-11-04" });
    expect(actionsOf(result)).toEqual(["alert.claimed by eli.reviewer@example.org"]);
    expect(result.matched).toEqual({ count: 1, capped: false });
  });

  it("refuses a malformed filter, naming the field", async () => {
    const issuesOf = (query: Record<string, string>) => {
      try {
        parseAuditQuery(query);
      } catch (error) {
        expect(error).toBeInstanceOf(AppError);
        return (error as AppError).issues.map((issue) => issue.path);
      }
      return [];
    };
    expect(issuesOf({ preset: "cleared_by" })).toEqual(["actor"]);
    expect(issuesOf({ preset: "cleared_alert", alert: "X", action: "alert.claimed" })).toEqual(["action"]);
    expect(issuesOf({ from: "yesterday" })).toEqual(["from"]);
    expect(issuesOf({ to: "2026-02-30" })).toEqual(["to"]);
    expect(issuesOf({ action: "DROP TABLE" })).toEqual(["action"]);
    expect(issuesOf({ before: "5", after: "3" })).toEqual(["after"]);
    expect(issuesOf({ limit: "100000" })).toEqual(["limit"]);
    expect(issuesOf({ preset: "everything" })).toEqual(["preset"]);
  });
});

describe("keyset paging", () => {
  it("walks every event exactly once towards the oldest and back towards the newest", async () => {
    const all = (await find({ limit: "500" })).events.map((event) => event.id);
    expect(all.length).toBeGreaterThanOrEqual(10);

    const older: string[][] = [];
    let page = await find({ limit: "3" });
    older.push(page.events.map((event) => event.id));
    expect(page.newerCursor).toBeNull();
    while (page.olderCursor) {
      page = await find({ limit: "3", before: page.olderCursor });
      older.push(page.events.map((event) => event.id));
    }
    expect(older.flat()).toEqual(all);

    const newer: string[][] = [older[older.length - 1]];
    while (page.newerCursor) {
      page = await find({ limit: "3", after: page.newerCursor });
      newer.unshift(page.events.map((event) => event.id));
    }
    expect(newer.flat()).toEqual(all);
  });
});

describe("an alert's timeline", () => {
  it("lists the alert's events oldest first and says when there are more", async () => {
    const timeline = await listAlertAuditEvents(prisma, { alertId: alerts[0].id });
    expect(timeline.events.map((event) => event.action)).toEqual(["alert.claimed", "outcome.recorded", "second_review.confirmed"]);
    expect(timeline.more).toBe(false);
    expect(await listAlertAuditEvents(prisma, { alertId: alerts[0].id, limit: 2 })).toMatchObject({ more: true, events: [{ action: "alert.claimed" }, { action: "outcome.recorded" }] });
  });
});

describe("viewing the trail is recorded, at most once per person, filter and minute", () => {
  it("records the first view, folds reloads and paging into it, and records a new question", async () => {
    const filter = parseAuditQuery({ preset: "cleared_alert", alert: alerts[0].externalId, before: "99" }).filter;
    const first = await recordAuditView(prisma, { actor: supervisor.actor, filter, context: { requestId: "req-a", ipAddress: "192.0.2.10" } });
    expect(first.recorded).toBe(true);
    const reload = await recordAuditView(prisma, { actor: supervisor.actor, filter: parseAuditQuery({ alert: alerts[0].externalId, preset: "cleared_alert", after: "2" }).filter });
    expect(reload).toEqual({ recorded: false, eventId: first.eventId });
    expect((await recordAuditView(prisma, { actor: supervisor.actor, filter: { actor: eli.email } })).recorded).toBe(true);
    expect((await recordAuditView(prisma, { actor: eli.actor, filter })).recorded).toBe(true);

    const { rows } = await pool.query("SELECT payload, request_id, ip_address FROM audit_events WHERE id = $1", [first.eventId]);
    expect(rows[0]).toEqual({ payload: { filter: { preset: "cleared_alert", alert: alerts[0].externalId } }, request_id: "req-a", ip_address: "192.0.2.10" });
  });

  it("records again once the window has passed", async () => {
    const filter = { action: "settings.changed" };
    expect((await recordAuditView(prisma, { actor: supervisor.actor, filter, windowSeconds: 0.3 })).recorded).toBe(true);
    expect((await recordAuditView(prisma, { actor: supervisor.actor, filter, windowSeconds: 0.3 })).recorded).toBe(false);
    await new Promise((resolve) => setTimeout(resolve, 400));
    expect((await recordAuditView(prisma, { actor: supervisor.actor, filter, windowSeconds: 0.3 })).recorded).toBe(true);
  });

  it("ten reloads racing each other record one view", async () => {
    const filter = { actor: "scoring-svc", from: "2026-11-01" };
    const results = await Promise.all(Array.from({ length: 10 }, () => recordAuditView(prisma, { actor: eli.actor, filter })));
    expect(results.filter((result) => result.recorded)).toHaveLength(1);
    expect(new Set(results.map((result) => result.eventId)).size).toBe(1);
  });
});
