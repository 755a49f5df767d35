// The Workload screen's numbers on a small desk worked out by hand, on a fixed clock.
//
// Now: 2026-12-02 12:00 UTC. SLA bands (the defaults): expected loss (EL) < 5,000 → 48 h;
// 5,000–49,999 → 24 h; ≥ 50,000 → 4 h. Due = arrival + SLA hours.
//
// Open alerts (EL in minor units, EUR):
//   ref  state          arrived            age    age band  EL      EL band  due               overdue?
//   A1   waiting        12-02 11:30        0.5 h  < 1 h     60,000  ≥ 50k    12-02 15:30       no
//   A2   waiting        12-02 10:00        2 h    1–4 h     60,000  ≥ 50k    12-02 14:00       no
//   A3   waiting        12-02 08:30        3.5 h  1–4 h     80,000  ≥ 50k    12-02 12:30       no
//   A4   waiting        12-02 07:00        5 h    4–12 h    70,000  ≥ 50k    12-02 11:00       yes (1 h)
//   A5   waiting        12-01 13:00        23 h   12–24 h   10,000  5k–50k   12-02 13:00       no
//   A6   waiting        12-01 11:00        25 h   1–2 d      1,000  < 5k     12-03 11:00       no
//   A7   in review Ada  12-02 09:00        3 h    1–4 h     20,000  5k–50k   12-03 09:00       no
//   A8   second review  11-30 10:00        50 h   > 2 d      3,000  < 5k     12-02 10:00       yes (2 h)
// Open 8: waiting 6, in review 1, second review 1. Overdue now: A4, A8 = 2 (waiting: A4 = 1).
// By age band: <1 h 1 · 1–4 h 3 · 4–12 h 1 · 12–24 h 1 · 1–2 d 1 · >2 d 1.
// By EL band: <5k: A6 + A8 = 2 (EL 4,000) · 5k–50k: A5 + A7 = 2 (EL 30,000) · ≥50k: A1–A4 = 4 (EL 270,000).
// EL waiting = 60,000 + 60,000 + 80,000 + 70,000 + 10,000 + 1,000 = 281,000.
//
// Reviews (outcomes) — rate window 8 h (04:00–12:00), on shift = activity in the last 2 h (since 10:00):
//   Ada:  claimed→closed 08:00→08:10 (600 s), 09:00→09:20 (1,200 s), 10:00→10:05 (300 s), 11:00→11:15 (900 s);
//         holds A7 since 11:40. At work since 08:00: 4 h → 4 / 4 = 1.0 an hour. Median (300, 600, 900, 1,200) = 750 s.
//   Ben:  10:00→10:10 (600 s), 10:30→10:36 (360 s), 11:20→11:30 (600 s). At work since 10:00: 2 h →
//         3 / 2 = 1.5 an hour. Median (360, 600, 600) = 600 s.
//   Cleo: two reviews yesterday, 12-01 19:50→20:00 and 19:40→19:50 (600 s each). Last activity 20:00 yesterday:
//         not on shift; nothing in the rate window (rate 0); median over 7 days 600 s; 0 today.
// Team: 2 on shift (Ada, Ben), rate 1.0 + 1.5 = 2.5 an hour. Time to clear = 8 / 2.5 = 3.2 h.
//
// Projected overdue within 4 h (until 16:00) at 2.5 an hour, open alerts worked in due order:
//   #1 A8 10:00 and #2 A4 11:00 are past due (not counted, but they are worked first).
//   #3 A3 due 12:30: closable by then 2.5 × 0.5 h = 1.25 < 3 → breach.
//   #4 A5 due 13:00: 2.5 × 1 h = 2.5 < 4 → breach.
//   #5 A2 due 14:00: 2.5 × 2 h = 5 ≥ 5 → on time (closing exactly at the due time is on time).
//   #6 A1 due 15:30: 2.5 × 3.5 h = 8.75 ≥ 6 → on time. A6 and A7 are due after 16:00.
//   Projected: 2 (A3, A5).
//
// History (UTC days): arrivals today = A1, A2, A3, A4, A7 + Ada's 4 + Ben's 3 closed alerts = 12;
// 12-01: A5, A6 + Cleo's 2 = 4; 11-30: A8 = 1. Closed today 7 (Ada 4, Ben 3), 12-01: 2 (Cleo).
// Open at the end of a day = open now − later arrivals + later closes: today 8; 12-01: 8 − 12 + 7 = 3
// (A5, A6, A8); 11-30: 3 − 4 + 2 = 1 (A8); 11-29 and before: 1 − 1 + 0 = 0.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { getWorkload } from "@/lib/workload/get-workload";
import type { Workload } from "@/lib/workload/schemas";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const at = (iso: string) => new Date(`${iso}:00Z`);

let model: TestModelVersion;
let ada: UserActor;
let ben: UserActor;
let cleo: UserActor;
let workload: Workload;

async function open(ref: string, state: "waiting" | "in_review" | "second_review", arrived: string, el: number, due: string, holder?: UserActor) {
  return createAlert(prisma, model.id, {
    externalId: ref,
    state,
    receivedAt: at(arrived),
    expectedLossMinor: el,
    dueAt: at(due),
    assignedToId: holder?.id ?? null,
    claimedAt: holder ? at("2026-12-02T11:40") : null,
    leaseExpiresAt: holder ? at("2026-12-02T12:10") : null,
  });
}

async function reviewed(ref: string, by: UserActor, claimed: string, closed: string, arrived: string) {
  const alert = await createAlert(prisma, model.id, { externalId: ref, state: "closed", receivedAt: at(arrived), closedAt: at(closed), finalOutcome: "legitimate" });
  await prisma.outcome.create({
    data: {
      alertId: alert.id,
      reviewRound: 1,
      outcome: "legitimate",
      reason: "Usual spending pattern",
      reviewerId: by.id,
      claimedAt: at(claimed),
      closedAt: at(closed),
      handlingSeconds: (at(closed).getTime() - at(claimed).getTime()) / 1000,
    },
  });
}

beforeAll(async () => {
  model = await createModelVersion(prisma);
  ada = await createUser(prisma, { role: "analyst", displayName: "Ada Quill" });
  ben = await createUser(prisma, { role: "analyst", displayName: "Ben Marlow" });
  cleo = await createUser(prisma, { role: "analyst", displayName: "Cleo Fenwick" });
  await createUser(prisma, { role: "analyst", displayName: "Dev Idle" });
  await createUser(prisma, { role: "auditor", displayName: "Quinn Ledger" });

  await open("A1", "waiting", "2026-12-02T11:30", 60_000, "2026-12-02T15:30");
  await open("A2", "waiting", "2026-12-02T10:00", 60_000, "2026-12-02T14:00");
  await open("A3", "waiting", "2026-12-02T08:30", 80_000, "2026-12-02T12:30");
  await open("A4", "waiting", "2026-12-02T07:00", 70_000, "2026-12-02T11:00");
  await open("A5", "waiting", "2026-12-01T13:00", 10_000, "2026-12-02T13:00");
  await open("A6", "waiting", "2026-12-01T11:00", 1_000, "2026-12-03T11:00");
  await open("A7", "in_review", "2026-12-02T09:00", 20_000, "2026-12-03T09:00", ada);
  await open("A8", "second_review", "2026-11-30T10:00", 3_000, "2026-12-02T10:00");

  await reviewed("ada-1", ada, "2026-12-02T08:00", "2026-12-02T08:10", "2026-12-02T07:30");
  await reviewed("ada-2", ada, "2026-12-02T09:00", "2026-12-02T09:20", "2026-12-02T08:30");
  await reviewed("ada-3", ada, "2026-12-02T10:00", "2026-12-02T10:05", "2026-12-02T09:30");
  await reviewed("ada-4", ada, "2026-12-02T11:00", "2026-12-02T11:15", "2026-12-02T10:30");
  await reviewed("ben-1", ben, "2026-12-02T10:00", "2026-12-02T10:10", "2026-12-02T09:30");
  await reviewed("ben-2", ben, "2026-12-02T10:30", "2026-12-02T10:36", "2026-12-02T10:00");
  await reviewed("ben-3", ben, "2026-12-02T11:20", "2026-12-02T11:30", "2026-12-02T10:50");
  await reviewed("cleo-1", cleo, "2026-12-01T19:50", "2026-12-01T20:00", "2026-12-01T19:20");
  await reviewed("cleo-2", cleo, "2026-12-01T19:40", "2026-12-01T19:50", "2026-12-01T19:30");

  workload = await getWorkload(prisma, { now: NOW });
});

describe("the backlog on a fixed clock", () => {
  it("counts open alerts by state, overdue now and expected loss waiting", () => {
    expect(workload.totals).toMatchObject({ open: 8, waiting: 6, inReview: 1, secondReview: 1, overdue: 2, overdueWaiting: 1, unpriced: 0 });
    expect(workload.totals.expectedLossWaiting).toEqual([{ currency: "EUR", minor: 281_000 }]);
    expect(workload.totals.expectedLoss).toEqual([{ currency: "EUR", minor: 304_000 }]);
  });

  it("puts each open alert in its age band", () => {
    expect(workload.byAge.map((row) => [row.band.label, row.open])).toEqual([
      ["< 1 h", 1],
      ["1–4 h", 3],
      ["4–12 h", 1],
      ["12–24 h", 1],
      ["1–2 d", 1],
      ["> 2 d", 1],
    ]);
    // A7 (in review) is in the 1–4 h band with A2 and A3; A8 (second review, overdue) is the oldest.
    expect(workload.byAge[1]).toMatchObject({ waiting: 2, inReview: 1, overdue: 0 });
    expect(workload.byAge[5]).toMatchObject({ secondReview: 1, overdue: 1 });
  });

  it("puts each open alert in its expected-loss (SLA) band", () => {
    expect(
      workload.byExpectedLoss.map((row) => ({ min: row.band.minExpectedLossMinor, max: row.band.maxExpectedLossMinor, sla: row.band.slaHours, open: row.open, overdue: row.overdue, el: row.expectedLoss })),
    ).toEqual([
      { min: 0, max: 5_000, sla: 48, open: 2, overdue: 1, el: [{ currency: "EUR", minor: 4_000 }] },
      { min: 5_000, max: 50_000, sla: 24, open: 2, overdue: 0, el: [{ currency: "EUR", minor: 30_000 }] },
      { min: 50_000, max: null, sla: 4, open: 4, overdue: 1, el: [{ currency: "EUR", minor: 270_000 }] },
    ]);
  });

  it("projects the alerts that will pass their due time in the next 4 hours at the team's rate", () => {
    expect(workload.team.analystsOnShift).toBe(2);
    expect(workload.team.closingRatePerHour).toBeCloseTo(2.5, 12);
    expect(workload.totals.projectedOverdue).toBe(2);
    expect(workload.team.timeToClearHours).toBeCloseTo(3.2, 12);
    expect(workload.team.closedToday).toBe(7);
  });

  it("keeps the same projection over 8 and 24 hours, since the alerts due later are reached in time", async () => {
    // Until 20:00 nothing new falls due (A7 12-03 09:00, A6 12-03 11:00), so the answer is the same.
    const longer = await getWorkload(prisma, { now: NOW, horizonHours: 8 });
    expect(longer.totals.projectedOverdue).toBe(2);
    // Over 24 h A7 (due 12-03 09:00, position #7: 2.5 × 21 h = 52.5 ≥ 7) and A6 are on time too.
    const day = await getWorkload(prisma, { now: NOW, horizonHours: 24 });
    expect(day.totals.projectedOverdue).toBe(2);
  });
});

describe("per analyst", () => {
  it("shows reviews today, closing rate, median handling time and what each one holds", () => {
    const byName = Object.fromEntries(workload.analysts.map((analyst) => [analyst.displayName, analyst]));
    expect(Object.keys(byName).sort()).toEqual(["Ada Quill", "Ben Marlow", "Cleo Fenwick"]);

    expect(byName["Ada Quill"]).toMatchObject({ onShift: true, closedToday: 4, reviewsInRateWindow: 4, hoursAtWork: 4, closingRatePerHour: 1, medianHandlingSeconds: 750, handledInHandlingWindow: 4 });
    expect(byName["Ada Quill"].held.map((alert) => alert.externalId)).toEqual(["A7"]);
    expect(byName["Ada Quill"].held[0].claimedAt).toEqual(at("2026-12-02T11:40"));
    expect(byName["Ada Quill"].lastActivityAt).toEqual(at("2026-12-02T11:40"));
    // Each carries the pseudonym that reports to API tokens use instead of the name.
    expect(byName["Ada Quill"].pseudonym).toMatch(/^rv_[0-9a-f]{12}$/);

    expect(byName["Ben Marlow"]).toMatchObject({ onShift: true, closedToday: 3, hoursAtWork: 2, closingRatePerHour: 1.5, medianHandlingSeconds: 600, held: [] });
    expect(byName["Cleo Fenwick"]).toMatchObject({ onShift: false, closedToday: 0, reviewsInRateWindow: 0, closingRatePerHour: 0, medianHandlingSeconds: 600, handledInHandlingWindow: 2 });
    expect(byName["Cleo Fenwick"].lastActivityAt).toEqual(at("2026-12-01T20:00"));
    // On shift first; among them the one holding the oldest claim.
    expect(workload.analysts.map((analyst) => analyst.displayName)).toEqual(["Ada Quill", "Ben Marlow", "Cleo Fenwick"]);
  });

  it("offers every active analyst or supervisor as an assignee, idle ones included, never an auditor", () => {
    expect(workload.assignees.map((person) => [person.displayName, person.heldCount])).toEqual([
      ["Ada Quill", 1],
      ["Ben Marlow", 0],
      ["Cleo Fenwick", 0],
      ["Dev Idle", 0],
    ]);
  });
});

describe("history and age distribution", () => {
  it("counts arrivals and closes per UTC day and rebuilds the open backlog at each day's end", () => {
    expect(workload.history).toHaveLength(14);
    expect(workload.history.at(-1)).toEqual({ day: "2026-12-02", arrived: 12, closed: 7, openAtEnd: 8 });
    expect(workload.history.at(-2)).toEqual({ day: "2026-12-01", arrived: 4, closed: 2, openAtEnd: 3 });
    expect(workload.history.at(-3)).toEqual({ day: "2026-11-30", arrived: 1, closed: 0, openAtEnd: 1 });
    expect(workload.history[0]).toEqual({ day: "2026-11-19", arrived: 0, closed: 0, openAtEnd: 0 });
  });

  it("spreads open alerts over whole hours of age, overdue apart", () => {
    const nonEmpty = workload.ageDistribution.filter((bin) => bin.overdue + bin.notOverdue > 0).map((bin) => [bin.fromHours, bin.notOverdue, bin.overdue]);
    // A1 0.5 h → 0; A2 2 h → 2; A3 3.5 h and A7 3 h → 3; A4 5 h (overdue) → 5; A5 23 h → 23; A6 25 h → 25;
    // A8 50 h (overdue) → the last bin, 48 h and older.
    expect(nonEmpty).toEqual([
      [0, 1, 0],
      [2, 1, 0],
      [3, 2, 0],
      [5, 0, 1],
      [23, 1, 0],
      [25, 1, 0],
      [48, 0, 1],
    ]);
    expect(workload.ageDistribution.at(-1)?.toHours).toBeNull();
  });
});

describe("leases", () => {
  it("returns a lease that ran out to the queue before counting", async () => {
    // At 12:30, Ada's lease on A7 (until 12:10) has run out: A7 is waiting again and Ada holds nothing.
    const later = await getWorkload(prisma, { now: at("2026-12-02T12:30") });
    expect(later.totals).toMatchObject({ waiting: 7, inReview: 0 });
    expect(later.analysts.find((analyst) => analyst.userId === ada.id)?.held).toEqual([]);
    const [event] = await prisma.$queryRaw<{ action: string }[]>`SELECT action FROM audit_events WHERE payload->>'externalId' = 'A7'`;
    expect(event.action).toBe("alert.lease_expired");
  });
});
