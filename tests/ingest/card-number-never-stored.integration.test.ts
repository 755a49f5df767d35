// DESIGN.md §5: no full card number is ever stored. This file sends alerts, labels and outcomes that
// carry card numbers in many places (CSV cells, NDJSON fields, nested reason codes, object keys, JSON
// numbers, free text), then reads every text, character and JSON column of every table and looks for
// them: both the exact digits sent, and anything of 13–19 digits that passes the Luhn check.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { csvRecordToAlertInput, parseCsv, parseNdjsonBody } from "@/lib/ingest/parse-body";
import { alertRow, createUser, loader, outcomeRow, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const prisma = database.prisma;
const now = new Date("2026-12-01T12:00:00Z");

// Test card numbers that the card networks publish for integration testing (all pass Luhn):
// Visa 4111 1111 1111 1111 and 4012 8888 8888 1881, Mastercard 5555 5555 5555 4444,
// American Express 3782 822463 10005 (15 digits), Discover 6011 1111 1111 1117.
const PANS = ["4111111111111111", "4012888888881881", "5555555555554444", "378282246310005", "6011111111111117"];

/** Luhn check (ISO/IEC 7812-1 Annex B), written here independently of lib/ingest/card-number-guard. */
function luhn(digits: string): boolean {
  let sum = 0;
  for (let i = 0; i < digits.length; i++) {
    let d = Number(digits[digits.length - 1 - i]);
    if (i % 2 === 1) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
  }
  return sum % 10 === 0;
}

/** Every 13–19 digit window of each digit run (single spaces or hyphens allowed) that passes Luhn.
 * Runs that touch a hexadecimal character are parts of hashes or ids, not card numbers. The migration
 * history (timestamps as names) is the tool's bookkeeping, not application data, and is left out. */
/** 8-4-4-4-12 hex digits: the ids the database generates. */
const UUID_PATTERN = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/gi;

function luhnCandidates(text: string): string[] {
  const found: string[] = [];
  // A random UUID whose first groups happen to be decimal digits ("59079412-3456-4789-…") reads as a
  // 16-digit run with dashes, and some window of it passes Luhn: the test failed once on a generated id
  // (by the odds of decimal groups, a few runs in a hundred). A UUID is 32 hex digits, no card number's
  // shape, so ids are left out of the scan.
  for (const match of text.replace(UUID_PATTERN, " ").matchAll(/(?<![0-9A-Fa-f])[0-9](?:[ -]?[0-9]){12,}(?![0-9A-Fa-f])/g)) {
    const digits = match[0].replace(/[ -]/g, "");
    for (let start = 0; start + 13 <= digits.length; start++) {
      for (let length = 13; length <= 19 && start + length <= digits.length; length++) {
        const window = digits.slice(start, start + length);
        // All zeros passes Luhn trivially (the audit chain's genesis hash is 64 of them); no card starts with 0.
        if (window[0] !== "0" && luhn(window)) found.push(window);
      }
    }
  }
  return found;
}

async function everyStoredText(): Promise<{ where: string; text: string }[]> {
  const columns = await database.pool.query<{ table_name: string; column_name: string }>(`
    SELECT c.table_name, c.column_name
      FROM information_schema.columns c JOIN information_schema.tables t USING (table_schema, table_name)
     WHERE c.table_schema = 'public' AND t.table_type = 'BASE TABLE' AND c.table_name <> '_prisma_migrations'
       AND (c.data_type IN ('text', 'character', 'character varying', 'json', 'jsonb') OR c.udt_name IN ('_text', '_varchar'))`);
  expect(columns.rows.length).toBeGreaterThan(30);
  const values: { where: string; text: string }[] = [];
  for (const { table_name: table, column_name: column } of columns.rows) {
    const result = await database.pool.query<{ value: string }>(`SELECT "${column}"::text AS value FROM "${table}" WHERE "${column}" IS NOT NULL`);
    for (const row of result.rows) values.push({ where: `${table}.${column}`, text: row.value });
  }
  return values;
}

beforeAll(async () => {
  await registerModelVersions(prisma);
  await createUser(prisma, "ana.reviewer@example.test");
});

describe("the card-number guard", () => {
  it("keeps every full card number out of every table, while the rest of each file is ingested", async () => {
    const csv = [
      "externalId,occurredAt,amountMinor,currency,channel,merchantCategoryCode,merchantCountry,entityRef,modelName,modelVersion,score,reasonCodes",
      "pan-csv-1,2026-11-30T10:00:00Z,1200,EUR,atm,6011,ES,tok_a1,txn-classifier,3.1.0,0.7,velocity_1h:0.2",
      "pan-csv-2,2026-11-30T10:00:00Z,1200,EUR,atm,6011,ES,4111 1111 1111 1111,txn-classifier,3.1.0,0.7,",
      '4012-8888-8888-1881,2026-11-30T10:00:00Z,1200,EUR,atm,6011,ES,tok_a2,txn-classifier,3.1.0,0.7,"note 5555555555554444:0.1"',
    ].join("\r\n");
    const parsed = parseCsv(csv);
    if (!parsed.ok) throw new Error(parsed.message);
    const fromCsv = await ingestAlerts(prisma, { actor: loader, rows: parsed.rows.map(csvRecordToAlertInput), channel: "upload", fileName: "alerts.csv", now });
    expect(fromCsv).toMatchObject({ accepted: 1, rejected: 2 });

    const json = await ingestAlerts(prisma, {
      actor: loader,
      rows: [
        alertRow({ externalId: "pan-json-1", reasonCodes: [{ code: "card 378282246310005 seen", contribution: 0.1 }] }),
        alertRow({ externalId: "pan-json-2", amountMinor: 6011111111111117 }),
        alertRow({ externalId: "pan-json-3", meta: { "4111111111111111": "as a key" } }),
        alertRow({ externalId: "pan-json-4", entityRef: "411111******1111" }),
      ],
      channel: "api",
      now,
    });
    expect(json).toMatchObject({ accepted: 1, rejected: 3 });

    const ndjson = parseNdjsonBody(
      [
        JSON.stringify({ externalId: "pan-json-4", label: "fraud", source: "chargeback", observedAt: "2026-12-01T09:00:00Z", reference: "CB 4111-1111-1111-1111" }),
        JSON.stringify({ externalId: "5555 5555 5555 4444", label: "fraud", source: "chargeback", observedAt: "2026-12-01T09:00:00Z" }),
        JSON.stringify({ externalId: "pan-json-4", label: "fraud", source: "customer_report", observedAt: "2026-12-01T09:00:00Z", reference: "CR-1" }),
      ].join("\n"),
    );
    if (!ndjson.ok) throw new Error(ndjson.message);
    expect(await ingestLabels(prisma, { actor: loader, rows: ndjson.rows, channel: "upload", fileName: "labels.ndjson", now })).toMatchObject({ accepted: 1, rejected: 2 });

    const outcomes = await ingestOutcomes(prisma, {
      actor: loader,
      rows: [
        outcomeRow({ externalId: "pan-csv-1", note: "customer read out 6011 1111 1111 1117 on the phone" }),
        outcomeRow({ externalId: "pan-json-4", reason: "Card 4012888888881881 compromised" }),
        outcomeRow({ externalId: "pan-csv-1", reviewerEmail: "4111111111111111@example.test" }),
      ],
      channel: "api",
      now,
    });
    expect(outcomes).toMatchObject({ accepted: 0, rejected: 3 });
    // The answers themselves show card numbers only masked.
    for (const answer of [fromCsv, json, outcomes]) {
      for (const pan of PANS) expect(JSON.stringify(answer)).not.toContain(pan);
    }
    expect(fromCsv.errors.find((error) => error.path === "entityRef")?.message).toContain("411111******1111");

    const stored = await everyStoredText();
    const exact = stored.filter(({ text }) => PANS.some((pan) => text.replace(/[ -]/g, "").includes(pan)));
    expect(exact.map(({ where }) => where)).toEqual([]);
    const lookAlikes = stored.flatMap(({ where, text }) => luhnCandidates(text).map((digits) => `${where}: ${digits.slice(0, 6)}…`));
    expect(lookAlikes).toEqual([]);
    // The scan does see the rows that were accepted, and the masked forms in the batches' reasons.
    expect(stored.some(({ where, text }) => where === "alerts.external_id" && text === "pan-csv-1")).toBe(true);
    expect(stored.some(({ where, text }) => where === "ingest_batches.errors" && text.includes("401288******1881"))).toBe(true);
  });
});
