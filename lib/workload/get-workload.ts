// The supervisor's view of the desk at `now` (DESIGN.md §4 Workload): the Workload screen and
// GET /api/v1/workload. Counting happens in PostgreSQL; each query returns a few dozen rows at most
// (one per band × state × currency, per analyst, per day), and lib/metrics turns them into rates.
//
// Definitions (also on the screen):
// - Open = not closed: waiting, in review, or waiting for a second review. Age = now − arrival.
// - Overdue = open with a due time at or before now. Projected overdue = open, not yet due, and still
//   open at its due time if the team works the open alerts in due order at its current rate
//   (lib/metrics projectedBreaches).
// - On shift = a claim or a close in the last ON_SHIFT_HOURS. Claims that were released or expired
//   without an outcome leave no trace outside the audit trail and do not count.
// - Closing rate = reviews closed in the last RATE_WINDOW_HOURS ÷ hours at work in that window
//   (lib/metrics closingRate). A review is an outcome, first or second; the team's rate is the sum
//   over the analysts on shift. Time to clear = open ÷ that rate (lib/metrics timeToClearHours).
// - Today = since midnight UTC; the history's days are UTC days.
//
// Indexes: every backlog query reads only open alerts through alerts_open_received_idx (partial,
// with the columns they need, so it is an index-only scan however long the history grows; see
// migration 20261202080000_workload_lookups). Arrivals per day walk alerts_model_version_received_idx
// per model version, closes per day alerts_closed_idx, reviews outcomes_closed_idx.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { can, roles } from "@/lib/auth/permissions";
import { closingRate } from "@/lib/metrics/closing-rate";
import { projectedBreaches, timeToClearHours } from "@/lib/metrics/workload";
import { getSettings } from "@/lib/settings/get-settings";
import { expireLeases } from "@/lib/queue/expire-leases";
import type { AuditContext } from "@/lib/audit/schemas";
import type { AgeBand, AnalystWorkload, BacklogCounts, ExpectedLossBand, Money, Workload } from "@/lib/workload/schemas";

export const AGE_BANDS: readonly AgeBand[] = [
  { label: "< 1 h", fromHours: 0, toHours: 1 },
  { label: "1–4 h", fromHours: 1, toHours: 4 },
  { label: "4–12 h", fromHours: 4, toHours: 12 },
  { label: "12–24 h", fromHours: 12, toHours: 24 },
  { label: "1–2 d", fromHours: 24, toHours: 48 },
  { label: "> 2 d", fromHours: 48, toHours: null },
];
/** The age histogram: whole hours up to this, then one bin for everything older. */
export const AGE_HISTOGRAM_HOURS = 48;
/** Closing rates are measured over the last hours of work, about one shift. */
export const RATE_WINDOW_HOURS = 8;
/** Someone who claimed or closed an alert this recently is counted as on shift. */
export const ON_SHIFT_HOURS = 2;
/** Median handling time is taken over the last days, so one slow alert today does not swing it. */
export const HANDLING_WINDOW_DAYS = 7;

const HOUR_MS = 3_600_000;
const DAY_MS = 24 * HOUR_MS;

export interface GetWorkloadOptions {
  now: Date;
  horizonHours?: number;
  days?: number;
  rateWindowHours?: number;
  onShiftHours?: number;
  handlingWindowDays?: number;
  /** For the audit events of leases returned to the queue before counting. */
  context?: AuditContext;
}

interface OpenRow {
  /** Whole hours of age, AGE_HISTOGRAM_HOURS for everything older. */
  hour: number;
  elBand: number;
  state: string;
  overdue: boolean;
  currency: string;
  alerts: number;
  expectedLoss: number;
  /** Due times (epoch ms) after now and within the horizon. */
  upcomingMs: number[];
}

/** An open-alerts row with its hour of age folded into an age band (1 = first band). */
type BacklogRow = Omit<OpenRow, "hour" | "upcomingMs"> & { ageBand: number };

interface AnalystRow {
  userId: string;
  displayName: string;
  pseudonym: string;
  role: string;
  active: boolean;
  closedToday: number;
  reviewsInWindow: number;
  firstClaimInWindow: Date | null;
  lastOutcomeActivity: Date | null;
  medianHandlingSeconds: number | null;
  handled: number;
}

interface HeldRow {
  alertId: string;
  externalId: string;
  assignedToId: string;
  claimedAt: Date;
  leaseExpiresAt: Date;
  dueAt: Date | null;
  expectedLossMinor: number | null;
  currency: string;
}

const emptyCounts = (): BacklogCounts => ({ open: 0, waiting: 0, inReview: 0, secondReview: 0, overdue: 0, expectedLoss: [] });

function addMoney(list: Money[], currency: string, minor: number): void {
  const entry = list.find((money) => money.currency === currency);
  if (entry) entry.minor += minor;
  else list.push({ currency, minor });
}

function addRow(counts: BacklogCounts, row: BacklogRow): void {
  counts.open += row.alerts;
  if (row.state === "waiting") counts.waiting += row.alerts;
  else if (row.state === "in_review") counts.inReview += row.alerts;
  else if (row.state === "second_review") counts.secondReview += row.alerts;
  if (row.overdue) counts.overdue += row.alerts;
  if (row.expectedLoss > 0) addMoney(counts.expectedLoss, row.currency, row.expectedLoss);
}

const sortMoney = (list: Money[]) => list.sort((a, b) => b.minor - a.minor || a.currency.localeCompare(b.currency));

export async function getWorkload(db: DbOrTx, options: GetWorkloadOptions): Promise<Workload> {
  const { now } = options;
  const horizonHours = options.horizonHours ?? 4;
  const days = options.days ?? 14;
  const rateWindowHours = options.rateWindowHours ?? RATE_WINDOW_HOURS;
  const onShiftHours = options.onShiftHours ?? ON_SHIFT_HOURS;
  const handlingWindowDays = options.handlingWindowDays ?? HANDLING_WINDOW_DAYS;

  // Leases that ran out go back to the queue first, so "held" and "waiting" are true at `now`.
  await expireLeases(db, { now, context: options.context });
  const { queue, costs } = await getSettings(db);

  const slaBands = [...queue.slaBands].sort((a, b) => a.minExpectedLossMinor - b.minExpectedLossMinor);
  const elEdges = slaBands.map((band) => band.minExpectedLossMinor);
  const ageEdges = AGE_BANDS.map((band) => band.fromHours);
  const todayStart = new Date(Math.floor(now.getTime() / DAY_MS) * DAY_MS);
  const firstDay = new Date(todayStart.getTime() - (days - 1) * DAY_MS);
  const rateStart = new Date(now.getTime() - rateWindowHours * HOUR_MS);
  const onShiftSince = new Date(now.getTime() - onShiftHours * HOUR_MS);
  const handlingStart = new Date(now.getTime() - handlingWindowDays * DAY_MS);
  const outcomesFrom = new Date(Math.min(todayStart.getTime(), rateStart.getTime(), handlingStart.getTime(), onShiftSince.getTime()));
  const horizonEnd = new Date(now.getTime() + horizonHours * HOUR_MS);

  // 1–3. One read of the open alerts (alerts_open_received_idx, index-only), grouped by whole hours of
  // age (the histogram; the age bands are whole hours too, so each band is a sum of hours) ×
  // expected-loss band × state × overdue × currency, with each group's due times within the
  // horizon for the breach projection. width_bucket gives the band number (1 = first band); an
  // arrival after `now` (clock skew) counts as the youngest. Three reads of the 200,000 open alerts
  // of the benchmark had been most of this screen's time (npm run bench -- --scale 1000000).
  // Seconds are date_part's double precision, not extract's exact numeric: numeric arithmetic on
  // 200,000 rows was a fifth of the statement, and whole hours, days and milliseconds need no more.
  // The planner cannot know that these expressions take a few dozen values, so it expects a group
  // per row and sorts all 200,000 rows to group them (a third of the statement); with sorting
  // switched off for this one statement it hashes them into the few dozen groups instead.
  const openRowsQuery = inTransaction(db, async (tx) => {
    await tx.$executeRawUnsafe("SET LOCAL enable_sort = off");
    const rows = await tx.$queryRaw<OpenRow[]>`
    SELECT least(${AGE_HISTOGRAM_HOURS}::int, floor(greatest(0, date_part('epoch', ${now}::timestamptz - received_at)) / 3600)::int) AS hour,
           CASE WHEN expected_loss_minor IS NULL THEN 0
                ELSE width_bucket(expected_loss_minor::float8, ${elEdges}::float8[]) END::int AS "elBand",
           state, coalesce(due_at <= ${now}, false) AS overdue, currency,
           count(*)::int AS alerts, coalesce(sum(expected_loss_minor), 0)::float8 AS "expectedLoss",
           coalesce(array_agg(round(date_part('epoch', due_at) * 1000)) FILTER (WHERE due_at > ${now} AND due_at <= ${horizonEnd}), '{}')::float8[] AS "upcomingMs"
      FROM alerts
     WHERE state <> 'closed'
     GROUP BY 1, 2, 3, 4, 5`;
    await tx.$executeRawUnsafe("SET LOCAL enable_sort = DEFAULT");
    return rows;
  });

  // 4. Per reviewer: reviews today and in the rate window, the first claim in it, last activity, median handling.
  const analystRowsQuery = db.$queryRaw<AnalystRow[]>`
    SELECT u.id AS "userId", u.display_name AS "displayName", u.pseudonym, u.role, u.active,
           count(*) FILTER (WHERE o.closed_at >= ${todayStart})::int AS "closedToday",
           count(*) FILTER (WHERE o.closed_at > ${rateStart})::int AS "reviewsInWindow",
           min(o.claimed_at) FILTER (WHERE o.closed_at > ${rateStart}) AS "firstClaimInWindow",
           max(greatest(o.closed_at, least(o.claimed_at, ${now}))) AS "lastOutcomeActivity",
           percentile_cont(0.5) WITHIN GROUP (ORDER BY o.handling_seconds)
             FILTER (WHERE o.origin = 'screen' AND o.closed_at > ${handlingStart}) AS "medianHandlingSeconds",
           count(*) FILTER (WHERE o.origin = 'screen' AND o.closed_at > ${handlingStart})::int AS handled
      FROM outcomes o
      JOIN users u ON u.id = o.reviewer_id
     WHERE o.closed_at > ${outcomesFrom} AND o.closed_at <= ${now}
     GROUP BY u.id`;

  // 5. Alerts held now (at most maxHeldPerAnalyst per person).
  const heldRowsQuery = db.$queryRaw<HeldRow[]>`
    SELECT a.id AS "alertId", a.external_id AS "externalId", a.assigned_to_id AS "assignedToId",
           a.claimed_at AS "claimedAt", a.lease_expires_at AS "leaseExpiresAt", a.due_at AS "dueAt",
           a.expected_loss_minor::float8 AS "expectedLossMinor", a.currency
      FROM alerts a
     WHERE a.state = 'in_review'
     ORDER BY a.claimed_at, a.id`;

  // 7. Arrived and closed per UTC day.
  const arrivedRowsQuery = db.$queryRaw<{ day: number; alerts: number }[]>`
    SELECT floor(date_part('epoch', a.received_at - ${firstDay}::timestamptz) / 86400)::int AS day, count(*)::int AS alerts
      FROM model_versions m
      CROSS JOIN LATERAL (
        SELECT received_at FROM alerts
         WHERE model_version_id = m.id AND received_at >= ${firstDay} AND received_at <= ${now}) a
     GROUP BY 1`;
  const closedRowsQuery = db.$queryRaw<{ day: number; alerts: number }[]>`
    SELECT floor(date_part('epoch', closed_at - ${firstDay}::timestamptz) / 86400)::int AS day, count(*)::int AS alerts
      FROM alerts
     WHERE state = 'closed' AND closed_at >= ${firstDay} AND closed_at <= ${now}
     GROUP BY 1`;

  // The queries are independent: side by side they use more than one connection and core (with
  // 200,000 open alerts, one after another they took 410 ms; npm run bench -- --scale 1000000).
  const [openRows, analystRows, heldRows, arrivedRows, closedRows] = await Promise.all([
    openRowsQuery,
    analystRowsQuery,
    heldRowsQuery,
    arrivedRowsQuery,
    closedRowsQuery,
  ]);

  // 6. People who may take an alert, and the people holding one (a deactivated holder still shows).
  const workRoles = roles.filter((role) => can(role, "alert.work"));
  const heldBy = [...new Set(heldRows.map((row) => row.assignedToId))];
  const people = await db.$queryRaw<{ userId: string; displayName: string; pseudonym: string; role: string; active: boolean }[]>`
    SELECT id AS "userId", display_name AS "displayName", pseudonym, role, active
      FROM users
     WHERE (active AND role = ANY(${workRoles}::text[])) OR id = ANY(${heldBy}::uuid[])
     ORDER BY display_name, id`;

  // ---- Backlog tables and totals (folding the few hundred rows of query 1 into bands).
  const ageBandOfHour = (hour: number) => ageEdges.filter((edge) => edge <= hour).length;
  const backlogRows: BacklogRow[] = openRows.map((row) => ({ ...row, ageBand: ageBandOfHour(row.hour) }));
  const byAge = AGE_BANDS.map((band) => ({ band, ...emptyCounts() }));
  const byExpectedLoss = slaBands.map((band, i) => ({
    band: {
      minExpectedLossMinor: band.minExpectedLossMinor,
      maxExpectedLossMinor: slaBands[i + 1]?.minExpectedLossMinor ?? null,
      slaHours: band.slaHours,
    } satisfies ExpectedLossBand,
    ...emptyCounts(),
  }));
  const unpricedRow = { band: { minExpectedLossMinor: null, maxExpectedLossMinor: null, slaHours: null } satisfies ExpectedLossBand, ...emptyCounts() };
  const totals = emptyCounts();
  const expectedLossWaiting: Money[] = [];
  let overdueWaiting = 0;
  for (const row of backlogRows) {
    addRow(totals, row);
    addRow(byAge[Math.min(row.ageBand, AGE_BANDS.length) - 1], row);
    addRow(row.elBand === 0 ? unpricedRow : byExpectedLoss[row.elBand - 1], row);
    if (row.state === "waiting") {
      if (row.expectedLoss > 0) addMoney(expectedLossWaiting, row.currency, row.expectedLoss);
      if (row.overdue) overdueWaiting += row.alerts;
    }
  }
  for (const counts of [totals, ...byAge, ...byExpectedLoss, unpricedRow]) sortMoney(counts.expectedLoss);

  // ---- People.
  const outcomeByUser = new Map(analystRows.map((row) => [row.userId, row]));
  const heldByUser = new Map<string, HeldRow[]>();
  for (const row of heldRows) {
    const list = heldByUser.get(row.assignedToId);
    if (list) list.push(row);
    else heldByUser.set(row.assignedToId, [row]);
  }
  const personById = new Map(people.map((person) => [person.userId, person]));
  for (const row of analystRows) personById.set(row.userId, { userId: row.userId, displayName: row.displayName, pseudonym: row.pseudonym, role: row.role, active: row.active });

  const analysts: AnalystWorkload[] = [];
  for (const person of personById.values()) {
    const outcomes = outcomeByUser.get(person.userId);
    const held = heldByUser.get(person.userId) ?? [];
    if (!outcomes && held.length === 0) continue; // idle: listed among the assignees only
    const times = [outcomes?.lastOutcomeActivity, ...held.map((alert) => alert.claimedAt)].filter((t): t is Date => t instanceof Date);
    const lastActivityAt = times.length ? new Date(Math.max(...times.map((t) => t.getTime()))) : null;
    const starts = [outcomes?.firstClaimInWindow, ...held.map((alert) => alert.claimedAt)].filter((t): t is Date => t instanceof Date);
    const activeSince = starts.length ? new Date(Math.min(...starts.map((t) => t.getTime()))) : null;
    const rate = closingRate({ reviewsClosed: outcomes?.reviewsInWindow ?? 0, activeSince, now, windowHours: rateWindowHours });
    analysts.push({
      userId: person.userId,
      displayName: person.displayName,
      pseudonym: person.pseudonym,
      role: person.role,
      active: person.active,
      onShift: lastActivityAt !== null && lastActivityAt.getTime() > onShiftSince.getTime(),
      lastActivityAt,
      held: held.map((alert) => ({
        alertId: alert.alertId,
        externalId: alert.externalId,
        claimedAt: alert.claimedAt,
        leaseExpiresAt: alert.leaseExpiresAt,
        dueAt: alert.dueAt,
        expectedLossMinor: alert.expectedLossMinor,
        currency: alert.currency,
      })),
      closedToday: outcomes?.closedToday ?? 0,
      reviewsInRateWindow: outcomes?.reviewsInWindow ?? 0,
      hoursAtWork: rate.hoursAtWork,
      closingRatePerHour: rate.perHour,
      medianHandlingSeconds: outcomes?.medianHandlingSeconds ?? null,
      handledInHandlingWindow: outcomes?.handled ?? 0,
    });
  }
  // On shift first, then by who holds the oldest claim, then by name.
  analysts.sort(
    (a, b) =>
      Number(b.onShift) - Number(a.onShift) ||
      (a.held[0]?.claimedAt.getTime() ?? Infinity) - (b.held[0]?.claimedAt.getTime() ?? Infinity) ||
      a.displayName.localeCompare(b.displayName),
  );

  const onShift = analysts.filter((analyst) => analyst.onShift);
  const teamRate = onShift.reduce((sum, analyst) => sum + analyst.closingRatePerHour, 0);
  const pastDue = openRows.reduce((sum, row) => sum + (row.overdue ? row.alerts : 0), 0);
  const upcomingMs = openRows.flatMap((row) => row.upcomingMs).sort((a, b) => a - b);
  const upcomingDueTimes = upcomingMs.map((ms) => new Date(ms));

  // ---- History: open at the end of a day = open now − arrivals after it + closes after it.
  const arrived = new Array<number>(days).fill(0);
  const closed = new Array<number>(days).fill(0);
  for (const row of arrivedRows) if (row.day >= 0 && row.day < days) arrived[row.day] += row.alerts;
  for (const row of closedRows) if (row.day >= 0 && row.day < days) closed[row.day] += row.alerts;
  const history: Workload["history"] = new Array(days);
  let openAtEnd = totals.open;
  for (let i = days - 1; i >= 0; i--) {
    history[i] = { day: new Date(firstDay.getTime() + i * DAY_MS).toISOString().slice(0, 10), arrived: arrived[i], closed: closed[i], openAtEnd };
    openAtEnd = openAtEnd - arrived[i] + closed[i];
  }

  const ageDistribution = Array.from({ length: AGE_HISTOGRAM_HOURS + 1 }, (_, hour) => ({
    fromHours: hour,
    toHours: hour < AGE_HISTOGRAM_HOURS ? hour + 1 : null,
    notOverdue: 0,
    overdue: 0,
  }));
  for (const row of openRows) ageDistribution[row.hour][row.overdue ? "overdue" : "notOverdue"] += row.alerts;

  const heldCount = (userId: string) => heldByUser.get(userId)?.length ?? 0;
  return {
    now,
    homeCurrency: costs.homeCurrency,
    parameters: { horizonHours, days, rateWindowHours, onShiftHours, handlingWindowDays, claimLeaseMinutes: queue.claimLeaseMinutes, maxHeldPerAnalyst: queue.maxHeldPerAnalyst },
    totals: {
      ...totals,
      overdueWaiting,
      projectedOverdue: projectedBreaches({ dueTimes: upcomingDueTimes, pastDueCount: pastDue, now, horizonHours, closingRatePerHour: teamRate }),
      expectedLossWaiting: sortMoney(expectedLossWaiting),
      unpriced: unpricedRow.open,
    },
    team: {
      analystsOnShift: onShift.length,
      closingRatePerHour: teamRate,
      closedToday: closed[days - 1],
      timeToClearHours: timeToClearHours({
        openAlerts: totals.open,
        analystsOnShift: onShift.length,
        closingRatePerAnalystPerHour: onShift.length === 0 ? 0 : teamRate / onShift.length,
      }),
    },
    byAge,
    byExpectedLoss: unpricedRow.open > 0 ? [...byExpectedLoss, unpricedRow] : byExpectedLoss,
    analysts,
    assignees: people
      .filter((person) => person.active && (workRoles as readonly string[]).includes(person.role))
      .map((person) => ({ userId: person.userId, displayName: person.displayName, pseudonym: person.pseudonym, role: person.role, heldCount: heldCount(person.userId) })),
    history,
    ageDistribution,
  };
}
