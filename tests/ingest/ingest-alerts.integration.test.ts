import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { ingestAlertBatches, ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { alertRow, loader, nextExternalId, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const prisma = database.prisma;
const now = new Date("2026-12-01T12:00:00Z");

beforeAll(async () => {
  await registerModelVersions(prisma);
});

async function storedCount(externalIds: string[]): Promise<number> {
  return prisma.alert.count({ where: { externalId: { in: externalIds } } });
}

describe("ingest of scored alerts", () => {
  it("stores valid alerts with their risk fields and reports invalid ones by row, path and message", async () => {
    const rows = [alertRow(), alertRow({ entityRef: "" }), alertRow({ channel: "telepathy", amountMinor: -5 })];
    const answer = await ingestAlerts(prisma, { actor: loader, rows, channel: "api", now });

    expect(answer).toMatchObject({ accepted: 1, duplicate: 0, conflict: 0, rejected: 2, rolledBack: false });
    expect(answer.errors.map((error) => [error.row, error.path])).toEqual([
      [1, "entityRef"],
      [2, "amountMinor"],
      [2, "channel"],
    ]);
    expect(answer.errors[0]).toMatchObject({ externalId: rows[1].externalId, message: "must not be empty" });

    const stored = await prisma.alert.findUniqueOrThrow({ where: { portfolioKey_externalId: { portfolioKey: "default", externalId: rows[0].externalId as string } } });
    // p = 0.02·0.91 / (0.0182 + 0.09); E = 12,000·0.9 + 1,500 = 12,300; EL = 2,068.9… → 2,069; 48 h band.
    expect(stored).toMatchObject({
      ingestBatchId: answer.batchId,
      receivedAt: now,
      calibrated: false,
      probabilitySource: "corrected_score",
      exposureMinor: BigInt(12_300),
      expectedLossMinor: BigInt(2_069),
      dueAt: new Date(now.getTime() + 48 * 3_600_000),
      state: "waiting",
    });
    expect(stored.probability).toBeCloseTo(0.0182 / 0.1082, 12);
    expect(stored.reasonCodes).toEqual([{ code: "velocity_1h", contribution: 0.31 }]);

    const batch = await prisma.ingestBatch.findUniqueOrThrow({ where: { id: answer.batchId } });
    expect(batch).toMatchObject({ kind: "alerts", channel: "api", rowCount: 3, accepted: 1, rejected: 2 });
    expect((batch.errors as unknown[]).length).toBe(3);
    const audit = await prisma.auditEvent.findFirstOrThrow({ where: { action: "ingest.batch_received", subjectId: answer.batchId } });
    expect(audit.payload).toMatchObject({ kind: "alerts", rows: 3, accepted: 1, rejected: 2 });
  });

  it("names an unknown model version and refuses a probability score outside [0, 1]", async () => {
    const rows = [
      alertRow({ modelVersion: "9.9.9" }),
      alertRow({ score: 1.4 }),
      alertRow({ modelName: "spend-ae", modelVersion: "1.0.0", score: 7.25 }),
    ];
    const answer = await ingestAlerts(prisma, { actor: loader, rows, channel: "api", now });
    expect(answer).toMatchObject({ accepted: 1, rejected: 2 });
    expect(answer.errors[0]).toMatchObject({ row: 0, path: "modelVersion" });
    expect(answer.errors[0].message).toContain("txn-classifier 9.9.9");
    expect(answer.errors[1]).toMatchObject({ row: 1, path: "score" });
    const anomaly = await prisma.alert.findFirstOrThrow({ where: { externalId: rows[2].externalId as string } });
    expect(anomaly).toMatchObject({ probability: 0.12, probabilitySource: "prior_hit_rate", calibrated: false });
  });

  it("is idempotent: the same alert again is a duplicate, changed content is a conflict, and neither is stored twice", async () => {
    const original = alertRow();
    const first = await ingestAlerts(prisma, { actor: loader, rows: [original], channel: "api", now });
    expect(first.accepted).toBe(1);

    // Same content written differently (key order, another offset for the same instant) is the same alert.
    const reordered = Object.fromEntries(Object.entries(original).reverse());
    const again = await ingestAlerts(prisma, {
      actor: loader,
      rows: [reordered, { ...original, occurredAt: "2026-11-30T11:00:00+01:00" }, { ...original, amountMinor: 99_000 }],
      channel: "api",
      now,
    });
    expect(again).toMatchObject({ accepted: 0, duplicate: 2, conflict: 1, rejected: 0 });
    expect(again.conflicts).toEqual([expect.objectContaining({ row: 2, path: "externalId", externalId: original.externalId })]);
    expect(await storedCount([original.externalId as string])).toBe(1);
    const kept = await prisma.alert.findFirstOrThrow({ where: { externalId: original.externalId as string } });
    expect(kept.amountMinor).toBe(BigInt(12_000));
    expect(kept.ingestBatchId).toBe(first.batchId);
  });

  it("treats a repeat inside one request like a repeat across requests", async () => {
    const row = alertRow();
    const answer = await ingestAlerts(prisma, { actor: loader, rows: [row, { ...row }, { ...row, score: 0.5 }], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 1, duplicate: 1, conflict: 1 });
    expect(answer.conflicts[0].message).toContain("row 0");
  });

  it("accepts all or nothing in atomic mode", async () => {
    const good = [alertRow(), alertRow()];
    const refused = await ingestAlerts(prisma, { actor: loader, rows: [...good, alertRow({ currency: "euro" })], channel: "api", atomic: true, now });
    expect(refused).toMatchObject({ accepted: 0, duplicate: 0, conflict: 0, rejected: 3, rolledBack: true });
    expect(refused.errors).toEqual([expect.objectContaining({ row: 2, path: "currency" })]);
    expect(await storedCount(good.map((row) => row.externalId as string))).toBe(0);
    // The refused request is still in the ingest log.
    expect(await prisma.ingestBatch.findUnique({ where: { id: refused.batchId } })).toMatchObject({ accepted: 0, rejected: 3 });

    const accepted = await ingestAlerts(prisma, { actor: loader, rows: good, channel: "api", atomic: true, now });
    expect(accepted).toMatchObject({ accepted: 2, rejected: 0, rolledBack: false });
    expect(await storedCount(good.map((row) => row.externalId as string))).toBe(2);
  });

  it("rolls an atomic batch back when a row conflicts with a stored alert", async () => {
    const stored = alertRow();
    await ingestAlerts(prisma, { actor: loader, rows: [stored], channel: "api", now });
    const fresh = alertRow();
    const answer = await ingestAlerts(prisma, { actor: loader, rows: [fresh, { ...stored, score: 0.2 }], channel: "api", atomic: true, now });
    expect(answer).toMatchObject({ accepted: 0, conflict: 1, rejected: 1, rolledBack: true });
    expect(await storedCount([fresh.externalId as string])).toBe(0);
  });

  it("takes a past receivedAt only when allowed, and never one in the future", async () => {
    const past = "2026-11-20T08:00:00Z";
    const allowed = alertRow({ receivedAt: past });
    const future = alertRow({ receivedAt: "2026-12-24T08:00:00Z" });
    const answer = await ingestAlerts(prisma, { actor: loader, rows: [allowed, future], channel: "demo", allowReceivedAt: true, now });
    expect(answer).toMatchObject({ accepted: 1, rejected: 1 });
    expect(answer.errors[0]).toMatchObject({ row: 1, path: "receivedAt" });
    const stored = await prisma.alert.findFirstOrThrow({ where: { externalId: allowed.externalId as string } });
    expect(stored.receivedAt).toEqual(new Date(past));
    expect(stored.dueAt).toEqual(new Date(new Date(past).getTime() + 48 * 3_600_000));

    const ignored = alertRow({ receivedAt: past });
    await ingestAlerts(prisma, { actor: loader, rows: [ignored], channel: "api", now });
    expect((await prisma.alert.findFirstOrThrow({ where: { externalId: ignored.externalId as string } })).receivedAt).toEqual(now);
  });

  it("shifts reported rows by the request's offset in a larger file", async () => {
    const answer = await ingestAlerts(prisma, { actor: loader, rows: [alertRow(), alertRow({ score: "high" })], channel: "upload", rowOffset: 2_000, now });
    expect(answer.errors[0]).toMatchObject({ row: 2_001, path: "score" });
  });

  it("leaves none of a batch's rows when the transaction fails after the insert", async () => {
    // The batch's audit event is written after its alerts; make that insert fail.
    await prisma.$executeRawUnsafe(`
      CREATE FUNCTION fail_ingest_audit() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF NEW.action = 'ingest.batch_received' THEN RAISE EXCEPTION 'simulated crash after the insert'; END IF;
        RETURN NEW;
      END $$`);
    await prisma.$executeRawUnsafe(`CREATE TRIGGER fail_ingest_audit BEFORE INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION fail_ingest_audit()`);
    const batchesBefore = await prisma.ingestBatch.count();
    const rows = Array.from({ length: 500 }, () => alertRow());
    try {
      await expect(ingestAlerts(prisma, { actor: loader, rows, channel: "api", now })).rejects.toThrow(/simulated crash/);
    } finally {
      await prisma.$executeRawUnsafe(`DROP TRIGGER fail_ingest_audit ON audit_events`);
      await prisma.$executeRawUnsafe(`DROP FUNCTION fail_ingest_audit()`);
    }
    expect(await storedCount(rows.map((row) => row.externalId as string))).toBe(0);
    expect(await prisma.ingestBatch.count()).toBe(batchesBefore);
  });

  it("leaves none of a batch's rows when the connection drops mid-batch", async () => {
    // The server ends the session that is writing the batch, as a crash or a cut network would.
    await prisma.$executeRawUnsafe(`
      CREATE FUNCTION drop_ingest_connection() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF NEW.action = 'ingest.batch_received' THEN PERFORM pg_terminate_backend(pg_backend_pid()); END IF;
        RETURN NEW;
      END $$`);
    await prisma.$executeRawUnsafe(`CREATE TRIGGER drop_ingest_connection BEFORE INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION drop_ingest_connection()`);
    const rows = Array.from({ length: 200 }, () => alertRow());
    try {
      await expect(ingestAlerts(prisma, { actor: loader, rows, channel: "api", now })).rejects.toThrow();
    } finally {
      await prisma.$executeRawUnsafe(`DROP TRIGGER drop_ingest_connection ON audit_events`);
      await prisma.$executeRawUnsafe(`DROP FUNCTION drop_ingest_connection()`);
    }
    expect(await storedCount(rows.map((row) => row.externalId as string))).toBe(0);
  });

  // 5,000 rows by default; INGEST_BENCH_ROWS=20000 measures a demo-sized batch.
  const bulk = Number(process.env.INGEST_BENCH_ROWS ?? 5_000);
  it(`ingests ${bulk.toLocaleString("en")} alerts in one batch`, async () => {
    const rows = Array.from({ length: bulk }, (_, index) =>
      alertRow({ externalId: nextExternalId("bulk"), amountMinor: 1_000 + index, score: (index % 1000) / 1000 }),
    );
    const started = performance.now();
    const answer = await ingestAlerts(prisma, { actor: loader, rows, channel: "command_line", now });
    const seconds = (performance.now() - started) / 1000;
    expect(answer).toMatchObject({ accepted: bulk, rejected: 0 });
    console.info(`ingest of ${bulk} alerts: ${seconds.toFixed(2)} s`);
    expect(await storedCount([rows[0].externalId as string, rows[bulk - 1].externalId as string])).toBe(2);
  }, 600_000);
});

describe("a file in pipelined batches (ingestAlertBatches, as npm run ingest sends alerts)", () => {
  it("stores each batch on its own, in order, with the same answers as one call per batch", async () => {
    const repeated = alertRow();
    const batches = [
      [alertRow(), repeated, alertRow({ entityRef: "" })],
      [alertRow(), { ...repeated }, alertRow({ ...repeated, amountMinor: 99_999 })],
      [alertRow()],
    ];
    const offsets = [0, 3, 6];
    const stored: number[] = [];
    const answers = await ingestAlertBatches(
      prisma,
      batches.map((rows, index) => ({ rows, rowOffset: offsets[index], now })),
      { actor: loader, channel: "command_line" },
      (_answer, rowOffset) => stored.push(rowOffset),
    );
    expect(stored).toEqual(offsets);
    expect(answers.map(({ accepted, duplicate, conflict, rejected }) => ({ accepted, duplicate, conflict, rejected }))).toEqual([
      { accepted: 2, duplicate: 0, conflict: 0, rejected: 1 },
      // The repeat of an alert stored by the batch before is a duplicate; changed content, a conflict.
      { accepted: 1, duplicate: 1, conflict: 1, rejected: 0 },
      { accepted: 1, duplicate: 0, conflict: 0, rejected: 0 },
    ]);
    // Row numbers count from the start of the file.
    expect(answers[0].errors[0].row).toBe(2);
    expect(answers[1].conflicts[0].row).toBe(5);
    expect(new Set(answers.map((answer) => answer.batchId)).size).toBe(3);
    const ids = batches.flat().map((row) => row.externalId as string);
    expect(await storedCount(ids)).toBe(4);
  });

  it("batches stored side by side still keep the file's earlier row when a later batch repeats its externalId with other content", async () => {
    // The repeated key is the last row of a large batch and the first of the next: stored side by
    // side without care, the next batch's INSERT reaches the key long before the first one's does.
    const first = Array.from({ length: 3_000 }, () => alertRow());
    const repeated = first[first.length - 1];
    const second = [alertRow({ ...repeated, amountMinor: 777_777 }), ...Array.from({ length: 20 }, () => alertRow())];
    const third = [alertRow()];
    const answers = await ingestAlertBatches(
      prisma,
      [first, second, third].map((rows, index) => ({ rows, rowOffset: [0, 3_000, 3_021][index], now })),
      { actor: loader, channel: "command_line" },
    );
    expect(answers.map(({ accepted, conflict }) => ({ accepted, conflict }))).toEqual([
      { accepted: 3_000, conflict: 0 },
      { accepted: 20, conflict: 1 },
      { accepted: 1, conflict: 0 },
    ]);
    // The conflict is reported on the later row (the first of the second batch), and the earlier content was kept.
    expect(answers[1].conflicts[0].row).toBe(3_000);
    const stored = await prisma.alert.findUniqueOrThrow({ where: { portfolioKey_externalId: { portfolioKey: "default", externalId: repeated.externalId as string } } });
    expect(stored.amountMinor).toBe(BigInt(repeated.amountMinor as number));
  });
});
