import { describe, expect, it } from "vitest";
import { alertContentHash, canonicalJson, sha256Hex } from "@/lib/ingest/content-hash";
import { alertRowSchema } from "@/lib/ingest/schemas";

const schema = alertRowSchema({ channels: ["card_present", "card_not_present", "atm"] });

function alert(overrides: Record<string, unknown> = {}) {
  return schema.parse({
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
    reasonCodes: [{ code: "velocity_24h", contribution: 0.41 }],
    ...overrides,
  });
}

describe("sha256Hex", () => {
  it("matches the published SHA-256 test vectors", () => {
    // FIPS 180-2, Appendix B.1 (one-block message "abc"), reproduced in NIST's example values.
    expect(sha256Hex("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    // SHA-256 of the empty string, widely published (from memory).
    expect(sha256Hex("")).toBe("e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  });
});

describe("canonicalJson (RFC 8785 ordering and serialization)", () => {
  it("sorts keys by UTF-16 code units: the RFC 8785 §3.2.3 example", () => {
    const input = JSON.parse(
      '{"\\u20ac": "Euro Sign", "\\r": "Carriage Return", "\\ufb33": "Hebrew Letter Dalet With Dagesh", "1": "One", "\\ud83d\\ude00": "Emoji: Grinning Face", "\\u0080": "Control", "\\u00f6": "Latin Small Letter O With Diaeresis"}',
    ) as unknown;
    expect(canonicalJson(input)).toBe(
      '{"\\r":"Carriage Return","1":"One","\u0080":"Control","ö":"Latin Small Letter O With Diaeresis","€":"Euro Sign","😀":"Emoji: Grinning Face","\ufb33":"Hebrew Letter Dalet With Dagesh"}',
    );
  });

  it("writes numbers and strings as RFC 8785 §3.2.2 shows", () => {
    const input = JSON.parse(
      '{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], "string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", "literals": [null, true, false]}',
    ) as unknown;
    expect(canonicalJson(input)).toBe(
      '{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}',
    );
  });

  it("writes dates as ISO 8601 UTC strings, leaves undefined fields out, and refuses what JSON cannot carry", () => {
    expect(canonicalJson({ b: undefined, a: new Date("2025-03-01T15:05:00+01:00") })).toBe('{"a":"2025-03-01T14:05:00.000Z"}');
    expect(canonicalJson(-0)).toBe("0");
    expect(() => canonicalJson({ x: Number.NaN })).toThrow(TypeError);
    expect(() => canonicalJson(new Date("not a date"))).toThrow(TypeError);
    expect(() => canonicalJson({ x: BigInt(1) })).toThrow(TypeError);
  });
});

describe("alertContentHash", () => {
  it("is 64 hexadecimal digits, the SHA-256 of the canonical JSON", () => {
    const value = alert();
    expect(alertContentHash(value)).toMatch(/^[0-9a-f]{64}$/);
    expect(alertContentHash(value)).toBe(sha256Hex(canonicalJson(value)));
  });

  it("is the same for a resend with the same content written differently", () => {
    const first = alert();
    // Same instant with another offset, keys in another order, defaults spelled out, an unknown key added.
    const resend = schema.parse({
      score: 0.87,
      modelVersion: "2025.02.1",
      modelName: "cnp-gbm",
      entityRef: "tok_9c1e77",
      merchantCountry: "DE",
      merchantCategoryCode: "5411",
      channel: "card_not_present",
      currency: "EUR",
      amountMinor: 12_500,
      occurredAt: "2025-03-01T15:05:00.000+01:00",
      externalId: "tx-000183",
      reasonCodes: [{ contribution: 0.41, code: "velocity_24h" }],
      belowTheLine: false,
      inclusionProbability: null,
      comment: "stripped by the schema",
    });
    expect(alertContentHash(resend)).toBe(alertContentHash(first));
  });

  it("differs when any field's content differs", () => {
    const base = alertContentHash(alert());
    const changes: Record<string, unknown>[] = [
      { amountMinor: 12_501 },
      { occurredAt: "2025-03-01T14:05:01Z" },
      { score: 0.870001 },
      { reasonCodes: [] },
      { reasonCodes: [{ code: "velocity_24h", contribution: 0.42 }] },
      { belowTheLine: true, inclusionProbability: 0.1 },
      { modelVersion: "2025.02.2" },
      { currency: "USD" },
    ];
    for (const change of changes) expect(alertContentHash(alert(change)), JSON.stringify(change)).not.toBe(base);
  });
});
