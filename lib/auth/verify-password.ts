// Checks a password against a stored scrypt hash in constant time (see hash-password.ts).
import { timingSafeEqual } from "node:crypto";
import { SCRYPT_LOG2_N, SCRYPT_P, SCRYPT_R, hashPassword, scryptAsync, scryptOptions } from "@/lib/auth/hash-password";

const phc = /^\$scrypt\$ln=(\d{1,2}),r=(\d{1,2}),p=(\d{1,2})\$([A-Za-z0-9_-]+)\$([A-Za-z0-9_-]+)$/;

export interface PasswordCheck {
  matches: boolean;
  /** The hash uses weaker parameters than today's: store a new one after a successful check. */
  needsRehash: boolean;
}

let dummyHash: Promise<string> | undefined;

/** A hash to check against when there is no account, so that an unknown email costs the same time as
 * a wrong password and response times do not reveal which accounts exist (OWASP ASVS 5.0 §6.3.8,
 * from memory). */
export function dummyPasswordHash(): Promise<string> {
  dummyHash ??= hashPassword("not-a-password-of-anyone");
  return dummyHash;
}

export async function verifyPassword(password: string, stored: string | null): Promise<PasswordCheck> {
  const match = stored ? phc.exec(stored) : null;
  if (!match) {
    await verifyPassword(password, await dummyPasswordHash());
    return { matches: false, needsRehash: false };
  }
  const [, log2N, r, p, salt, hash] = match;
  const expected = Buffer.from(hash, "base64url");
  const actual = await scryptAsync(password, Buffer.from(salt, "base64url"), expected.length, scryptOptions(Number(log2N), Number(r), Number(p)));
  const matches = actual.length === expected.length && timingSafeEqual(actual, expected);
  const needsRehash = Number(log2N) < SCRYPT_LOG2_N || Number(r) < SCRYPT_R || Number(p) < SCRYPT_P;
  return { matches, needsRehash };
}
