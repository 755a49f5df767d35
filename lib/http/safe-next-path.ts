// Where to go after signing in. Only a path on this site is accepted, so a crafted link cannot
// send someone to another site after they typed their password (an open redirect; OWASP ASVS 5.0
// §3.7.2 or nearby, from memory).
export const DEFAULT_AFTER_SIGN_IN = "/queue";

export function safeNextPath(value: unknown): string {
  if (typeof value !== "string" || value.length === 0 || value.length > 1000) return DEFAULT_AFTER_SIGN_IN;
  if (!value.startsWith("/") || value.startsWith("//") || value.startsWith("/\\")) return DEFAULT_AFTER_SIGN_IN;
  if (/[\u0000-\u001f\u007f\\]/.test(value)) return DEFAULT_AFTER_SIGN_IN;
  if (value === "/sign-in" || value.startsWith("/sign-in?") || value.startsWith("/sign-out")) return DEFAULT_AFTER_SIGN_IN;
  return value;
}

export function signInPathFor(next: string | null | undefined): string {
  const target = next ? safeNextPath(next) : DEFAULT_AFTER_SIGN_IN;
  return target === DEFAULT_AFTER_SIGN_IN ? "/sign-in" : `/sign-in?next=${encodeURIComponent(target)}`;
}
