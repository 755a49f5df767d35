import { describe, expect, it } from "vitest";
import { csvRecordToAlertInput, parseCsv, parseNdjsonBody } from "@/lib/ingest/parse-body";
import { alertRowSchema, labelRowSchema, outcomeRowSchema } from "@/lib/ingest/schemas";
import { validateRows } from "@/lib/ingest/validate-rows";

const schema = alertRowSchema({ channels: ["card_present", "card_not_present", "atm"] });

function alertInput(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    externalId: "tx-000183",
    occurredAt: "2025-03-01T14:05:00Z",
    amountMinor: 12_500,
    currency: "EUR",
    channel: "card_not_present",
    merchantCategoryCode: "5411",
    merchantCountry: "DE",
    entityRef: "tok_9c1e77",
    modelName: "cnp-gbm",
    modelVersion: "2025.02.1",
    score: 0.87,
    ...overrides,
  };
}

// Published test card numbers (Braintree Ruby SDK, Braintree::Test::CreditCardNumbers).
const TEST_PAN = "4111111111111111";
const OTHER_TEST_PAN = "5555555555554444";

describe("validateRows", () => {
  it("keeps valid rows with their 0-based index and reports invalid ones by index and path", () => {
    const result = validateRows([alertInput(), alertInput({ channel: "phone" }), alertInput({ externalId: "tx-2" })], schema);
    expect(result.valid.map((v) => [v.row, v.value.externalId])).toEqual([
      [0, "tx-000183"],
      [2, "tx-2"],
    ]);
    expect(result.errors).toEqual([{ row: 1, path: "channel", message: "expected one of card_present, card_not_present, atm" }]);
    expect(result.errorsTruncated).toBe(false);
  });

  it("rejects a row holding a full card number, one error per field, with the number masked", () => {
    const row = alertInput({ entityRef: TEST_PAN, reasonCodes: [{ code: `card ${OTHER_TEST_PAN}`, contribution: 0.2 }] });
    const result = validateRows([row], schema);
    expect(result.valid).toEqual([]);
    expect(result.errors).toEqual([
      {
        row: 0,
        path: "entityRef",
        message: "looks like a full card number (shown masked: 411111******1111); send a token or a masked number instead",
      },
      {
        row: 0,
        path: "reasonCodes[0].code",
        message: "looks like a full card number (shown masked: 555555******4444); send a token or a masked number instead",
      },
    ]);
  });

  it("runs the card-number guard before the schema, so such a row gets no other errors", () => {
    const result = validateRows([alertInput({ entityRef: TEST_PAN, currency: "euro", score: "x" })], schema);
    expect(result.errors.map((e) => e.path)).toEqual(["entityRef"]);
  });

  it("catches card numbers in fields the schema would strip, and in number-typed fields", () => {
    const result = validateRows([alertInput({ comment: `paid with ${TEST_PAN}` }), alertInput({ amountMinor: Number(TEST_PAN) })], schema);
    expect(result.valid).toEqual([]);
    expect(result.errors.map((e) => [e.row, e.path])).toEqual([
      [0, "comment"],
      [1, "amountMinor"],
    ]);
  });

  it("never puts the raw card number into any error", () => {
    const rows = [
      alertInput({ entityRef: TEST_PAN }),
      { [TEST_PAN]: "as a key" },
      TEST_PAN,
      alertInput({ externalId: `${TEST_PAN.slice(0, 4)} ${TEST_PAN.slice(4, 8)} ${TEST_PAN.slice(8, 12)} ${TEST_PAN.slice(12)}` }),
    ];
    const text = JSON.stringify(validateRows(rows, schema));
    expect(text).not.toContain(TEST_PAN);
    expect(text).not.toContain("4111 1111 1111 1111");
    expect(text).not.toContain(TEST_PAN.slice(6, 12)); // the digits masking hides
  });

  it("turns zod issues into readable messages", () => {
    const { errors } = validateRows(
      [
        alertInput({ externalId: undefined }),
        alertInput({ externalId: "x".repeat(201) }),
        alertInput({ entityRef: "" }),
        alertInput({ amountMinor: 1.5 }),
        alertInput({ amountMinor: -1 }),
        alertInput({ score: "0.9" }),
        alertInput({ reasonCodes: [{ code: "a" }] }),
        "not an object",
        alertInput({ occurredAt: "yesterday" }),
        alertInput({ amountMinor: 1e20 }), // 2^53..1e19 would be taken for a card number (digits lost)
      ],
      schema,
    );
    expect(errors).toEqual([
      { row: 0, path: "externalId", message: "required" },
      { row: 1, path: "externalId", message: "must be at most 200 characters" },
      { row: 2, path: "entityRef", message: "must not be empty" },
      { row: 3, path: "amountMinor", message: "expected the amount in minor units (cents): a whole number" },
      { row: 4, path: "amountMinor", message: "must be 0 or more (amount in minor units)" },
      { row: 5, path: "score", message: "expected a number, received a string" },
      { row: 6, path: "reasonCodes[0].contribution", message: "required" },
      { row: 7, path: "", message: "expected an object, received a string" },
      {
        row: 8,
        path: "occurredAt",
        message:
          "expected an ISO 8601 date-time with seconds and a UTC offset, e.g. 2025-03-01T14:05:00Z or 2025-03-01T15:05:00+01:00",
      },
      { row: 9, path: "amountMinor", message: "must be at most 9007199254740991 (the largest whole number JSON carries exactly)" },
    ]);
  });

  it("reports every issue of a row", () => {
    const { errors } = validateRows([alertInput({ currency: "eur", merchantCountry: "DEU" })], schema);
    expect(errors.map((e) => e.path)).toEqual(["currency", "merchantCountry"]);
  });

  it("caps the number of errors when asked, but still validates every row", () => {
    const rows = [alertInput({ channel: "x" }), alertInput({ channel: "y" }), alertInput(), alertInput({ channel: "z" })];
    const result = validateRows(rows, schema, { maxErrors: 2 });
    expect(result.errors.map((e) => e.row)).toEqual([0, 1]);
    expect(result.errorsTruncated).toBe(true);
    expect(result.valid.map((v) => v.row)).toEqual([2]);
  });

  it("validates labels and outcomes with the same rules", () => {
    const labels = validateRows(
      [{ externalId: "tx-1", label: "fraud", source: "chargeback", observedAt: "2025-06-12T08:00:00Z" }, { externalId: "tx-2" }],
      labelRowSchema,
    );
    expect(labels.valid).toHaveLength(1);
    expect(labels.errors.map((e) => [e.row, e.path, e.message])).toEqual([
      [1, "label", "required"],
      [1, "source", "required"],
      [1, "observedAt", "required"],
    ]);

    const outcomes = validateRows(
      [
        {
          externalId: "tx-1",
          outcome: "legitimate",
          reason: "customer confirmed the purchase",
          reviewerEmail: "not-an-email",
          claimedAt: "2025-03-01T14:10:00Z",
          closedAt: "2025-03-01T14:22:00Z",
        },
      ],
      outcomeRowSchema,
    );
    expect(outcomes.errors).toEqual([{ row: 0, path: "reviewerEmail", message: "expected an email address" }]);
  });
});

describe("from an uploaded body to validated rows", () => {
  it("CSV: converted records validate, with reason-code paths from the CSV cell", () => {
    const csv = [
      "externalId,occurredAt,amountMinor,currency,channel,merchantCategoryCode,merchantCountry,entityRef,modelName,modelVersion,score,reasonCodes,belowTheLine,inclusionProbability",
      'tx-1,2025-03-01T14:05:00Z,12500,EUR,atm,0742,DE,tok_1,cnp-gbm,2025.02.1,0.87,"velocity_24h:0.41;geo:0.2",false,',
      "tx-2,2025-03-01T14:06:00+01:00,990,EUR,atm,5411,FR,tok_2,cnp-gbm,2025.02.1,0.12,a:1;b,1,0.05",
      `tx-3,2025-03-01T14:07:00Z,100,EUR,atm,5411,FR,${TEST_PAN},cnp-gbm,2025.02.1,0.5,,0,`,
    ].join("\r\n");
    const parsed = parseCsv(csv);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const result = validateRows(parsed.rows.map(csvRecordToAlertInput), schema);

    expect(result.valid).toHaveLength(1);
    expect(result.valid[0].value).toMatchObject({
      externalId: "tx-1",
      merchantCategoryCode: "0742",
      reasonCodes: [
        { code: "velocity_24h", contribution: 0.41 },
        { code: "geo", contribution: 0.2 },
      ],
      belowTheLine: false,
      inclusionProbability: null,
    });
    expect(result.errors).toEqual([
      { row: 1, path: "reasonCodes[1].contribution", message: "required" },
      {
        row: 2,
        path: "entityRef",
        message: "looks like a full card number (shown masked: 411111******1111); send a token or a masked number instead",
      },
    ]);
  });

  it("NDJSON: a PAN sent as a JSON number is caught", () => {
    const body = [JSON.stringify(alertInput()), `{"externalId":"tx-2","entityRef":${TEST_PAN}}`].join("\n");
    const parsed = parseNdjsonBody(body);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const result = validateRows(parsed.rows, schema);
    expect(result.valid.map((v) => v.row)).toEqual([0]);
    expect(result.errors).toEqual([
      {
        row: 1,
        path: "entityRef",
        message: "looks like a full card number (shown masked: 411111******1111); send a token or a masked number instead",
      },
    ]);
  });
});
