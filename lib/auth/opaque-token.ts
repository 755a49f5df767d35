// Opaque bearer secrets (session cookies, API tokens): 256 bits from the operating system's CSPRNG
// (OWASP ASVS 5.0 §7.2.3 and §11.5.1, at least 128 bits of entropy from a CSPRNG; from memory).
// Only a SHA-256 of a token is stored: a leaked table yields no usable token, and a token with
// 256 bits of entropy needs no salt or slow hash (there is nothing to guess).
import { createHash, randomBytes } from "node:crypto";

export function newOpaqueToken(): string {
  return randomBytes(32).toString("base64url");
}

export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}
