// scrypt parameters from the OWASP Password Storage Cheat Sheet (N = 2^16, r = 8, p = 2 is one of
// its equivalent settings; from memory), stored with each hash.
import { describe, expect, it } from "vitest";
import { hashPassword } from "@/lib/auth/hash-password";
import { verifyPassword } from "@/lib/auth/verify-password";

describe("password hashes", () => {
  it("are salted scrypt in PHC form, verify the right password only, and take it exactly as typed", { timeout: 120_000 }, async () => {
    const first = await hashPassword("Zürich in the rain");
    const second = await hashPassword("Zürich in the rain");
    expect(first).toMatch(/^\$scrypt\$ln=16,r=8,p=2\$[A-Za-z0-9_-]{22}\$[A-Za-z0-9_-]{43}$/);
    expect(first).not.toBe(second);
    expect(await verifyPassword("Zürich in the rain", first)).toEqual({ matches: true, needsRehash: false });
    // Unicode is normalised (NFC), so the same text typed on another keyboard still matches.
    expect((await verifyPassword("Zu\u0308rich in the rain", first)).matches).toBe(true);
    expect((await verifyPassword("Zürich in the rain ", first)).matches).toBe(false);
    expect((await verifyPassword("zürich in the rain", first)).matches).toBe(false);
  });

  it("report weaker stored parameters for a rehash, and never match a missing or malformed hash", { timeout: 120_000 }, async () => {
    const weak = "$scrypt$ln=14,r=8,p=1$c2FsdHNhbHRzYWx0c2FsdA$AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA";
    expect((await verifyPassword("anything", weak)).needsRehash).toBe(true);
    expect(await verifyPassword("anything", null)).toEqual({ matches: false, needsRehash: false });
    expect(await verifyPassword("anything", "plain-text-password")).toEqual({ matches: false, needsRehash: false });
  });
});
