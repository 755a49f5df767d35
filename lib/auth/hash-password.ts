// Password storage with scrypt from Node's standard library: memory-hard, so guessing in bulk on
// GPUs costs memory as well as time (OWASP ASVS 5.0 §11.4.2, passwords stored with an approved,
// computationally intensive key derivation function with current parameters; number from memory).
//
// Parameters: N = 2^16, r = 8, p = 2 — one of the equivalent scrypt settings listed in the OWASP
// Password Storage Cheat Sheet (minimum: N = 2^17, r = 8, p = 1, or the same work with a smaller N
// and a larger p). Each hash uses 128·N·r = 64 MiB and takes a few hundred milliseconds here.
// The parameters are stored with each hash (PHC string format), so raising them later keeps old
// hashes verifiable; verifyPassword() reports when a hash should be redone at the next sign-in.
import { randomBytes, scrypt, type ScryptOptions } from "node:crypto";

export const SCRYPT_LOG2_N = 16;
export const SCRYPT_R = 8;
export const SCRYPT_P = 2;
const KEY_LENGTH = 32;
const SALT_LENGTH = 16;

export function scryptAsync(password: string, salt: Buffer, keyLength: number, options: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    scrypt(password.normalize("NFC"), salt, keyLength, options, (error, key) => (error ? reject(error) : resolve(key)));
  });
}

/** Node refuses to use more than `maxmem` bytes; leave room above 128·N·r. */
export function scryptOptions(log2N: number, r: number, p: number): ScryptOptions {
  return { N: 2 ** log2N, r, p, maxmem: 2 * 128 * 2 ** log2N * r + 1024 * 1024 };
}

/** Returns `$scrypt$ln=16,r=8,p=2$<salt>$<hash>` (base64 without padding). The password is never logged. */
export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(SALT_LENGTH);
  const key = await scryptAsync(password, salt, KEY_LENGTH, scryptOptions(SCRYPT_LOG2_N, SCRYPT_R, SCRYPT_P));
  return `$scrypt$ln=${SCRYPT_LOG2_N},r=${SCRYPT_R},p=${SCRYPT_P}$${salt.toString("base64url")}$${key.toString("base64url")}`;
}
