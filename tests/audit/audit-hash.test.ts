import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { auditEventHash, GENESIS_HASH, type HashedAuditFields } from "@/lib/audit/audit-hash";
import { canonicalJson } from "@/lib/audit/canonical-json";

const sha256Hex = (text: string) => createHash("sha256").update(text).digest("hex");

describe("the SHA-256 primitive", () => {
  // NIST's SHA-256 examples (FIPS 180-2 Appendix B.1–B.3, republished with FIPS 180-4 as
  // "Examples with Intermediate Values", SHA256.pdf on csrc.nist.gov). Quoted from memory; the
  // "abc" value was checked against a published copy of the FIPS 180-2 vector set.
  it("matches the one-block message 'abc' (B.1)", () => {
    expect(sha256Hex("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });

  it("matches the two-block 448-bit message (B.2)", () => {
    expect(sha256Hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq")).toBe(
      "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
    );
  });

  // Not in the appendix; the widely published digest of zero bytes (from memory).
  it("matches the empty message", () => {
    expect(sha256Hex("")).toBe("e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  });

  it("matches one million repetitions of 'a' (B.3)", () => {
    expect(sha256Hex("a".repeat(1_000_000))).toBe("cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  });
});

const baseEvent: HashedAuditFields = {
  occurredAt: new Date("2026-11-30T09:15:42.123Z"),
  actorType: "user",
  actorId: "6f1c2a52-1d1e-4f57-9a43-0d1b6c0d7e11",
  actorLabel: "analyst.one@example.org",
  action: "outcome.recorded",
  subjectType: "alert",
  subjectId: "0b5f3f4e-8d0e-4c8e-a7a5-3b7f7f1e2a10",
  payload: {
    alertId: "0b5f3f4e-8d0e-4c8e-a7a5-3b7f7f1e2a10",
    externalId: "TX-000123",
    outcome: "legitimate",
    reason: "customer confirmed by call-back",
    round: 1,
    handlingSeconds: 312,
    origin: "screen",
    sentToSecondReview: false,
  },
  requestId: "req-7",
  ipAddress: "198.51.100.23",
};

describe("the audit event hash", () => {
  it("is SHA-256 of the previous hash followed by the event's canonical JSON, byte for byte", () => {
    // This exact layout is what every stored hash was computed from: changing it would make
    // every existing chain look broken, so it is pinned here literally.
    const body =
      '{"action":"outcome.recorded","actorId":"6f1c2a52-1d1e-4f57-9a43-0d1b6c0d7e11","actorLabel":"analyst.one@example.org",' +
      '"actorType":"user","ipAddress":"198.51.100.23","occurredAt":"2026-11-30T09:15:42.123Z",' +
      '"payload":{"alertId":"0b5f3f4e-8d0e-4c8e-a7a5-3b7f7f1e2a10","externalId":"TX-000123","handlingSeconds":312,' +
      '"origin":"screen","outcome":"legitimate","reason":"customer confirmed by call-back","round":1,"sentToSecondReview":false},' +
      '"requestId":"req-7","subjectId":"0b5f3f4e-8d0e-4c8e-a7a5-3b7f7f1e2a10","subjectType":"alert"}';
    expect(auditEventHash(GENESIS_HASH, baseEvent)).toBe(sha256Hex(GENESIS_HASH + body));
  });

  it("does not depend on the order in which payload keys were written", () => {
    const reordered = { ...baseEvent, payload: Object.fromEntries(Object.entries(baseEvent.payload as object).reverse()) };
    expect(JSON.stringify(reordered.payload)).not.toBe(JSON.stringify(baseEvent.payload));
    expect(auditEventHash(GENESIS_HASH, reordered)).toBe(auditEventHash(GENESIS_HASH, baseEvent));
  });

  it("changes when the previous hash changes", () => {
    expect(auditEventHash("1".repeat(64), baseEvent)).not.toBe(auditEventHash(GENESIS_HASH, baseEvent));
  });

  const changes: Record<keyof HashedAuditFields, unknown[]> = {
    occurredAt: [new Date("2026-11-30T09:15:42.124Z")],
    actorType: ["api_client", "system"],
    actorId: [null, "6f1c2a52-1d1e-4f57-9a43-0d1b6c0d7e12"],
    actorLabel: ["analyst.two@example.org", "Analyst.one@example.org"],
    action: ["outcome.recorded_", "second_review.confirmed"],
    subjectType: [null, "alerts"],
    subjectId: [null, "null", ""],
    payload: [{}, null, { ...(baseEvent.payload as object), round: 2 }, { ...(baseEvent.payload as object), reason: "customer confirmed by call-back " }],
    requestId: [null, "req-8"],
    ipAddress: [null, "198.51.100.24"],
  };
  for (const [field, values] of Object.entries(changes) as [keyof HashedAuditFields, unknown[]][]) {
    it(`changes when ${field} changes`, () => {
      const original = auditEventHash(GENESIS_HASH, baseEvent);
      for (const value of values) {
        expect(auditEventHash(GENESIS_HASH, { ...baseEvent, [field]: value })).not.toBe(original);
      }
    });
  }

  it("changes when any single payload value changes, at any depth (every leaf, one at a time)", () => {
    const nested: HashedAuditFields = {
      ...baseEvent,
      action: "settings.changed",
      payload: { key: "queue", before: { slaHours: [4, 24, 72], order: "expected_loss" }, after: { slaHours: [4, 24, 48], order: "expected_loss" } },
    };
    const original = auditEventHash(GENESIS_HASH, nested);
    const leaves: string[][] = [];
    const walk = (value: unknown, path: string[]) => {
      if (value !== null && typeof value === "object") for (const [key, item] of Object.entries(value)) walk(item, [...path, key]);
      else leaves.push(path);
    };
    walk(nested.payload, []);
    expect(leaves.length).toBe(9);
    for (const path of leaves) {
      const copy = structuredClone(nested.payload) as Record<string, unknown>;
      let cursor = copy as Record<string, unknown>;
      for (const key of path.slice(0, -1)) cursor = cursor[key] as Record<string, unknown>;
      const last = path[path.length - 1];
      const before = cursor[last];
      cursor[last] = typeof before === "number" ? before + 1 : `${String(before)}x`;
      expect(auditEventHash(GENESIS_HASH, { ...nested, payload: copy }), path.join(".")).not.toBe(original);
    }
  });

  it("keeps field boundaries: moving text from one field to the next changes the hash", () => {
    const a = auditEventHash(GENESIS_HASH, { ...baseEvent, actorLabel: "ab", requestId: "c" });
    const b = auditEventHash(GENESIS_HASH, { ...baseEvent, actorLabel: "a", requestId: "bc" });
    expect(a).not.toBe(b);
  });

  it("is 64 lowercase hexadecimal characters", () => {
    expect(auditEventHash(GENESIS_HASH, baseEvent)).toMatch(/^[0-9a-f]{64}$/);
    expect(canonicalJson({})).toBe("{}");
  });
});
