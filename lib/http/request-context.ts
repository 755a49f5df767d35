// Request id and client address of an incoming request, for logs and audit events.
import { randomUUID } from "node:crypto";
import type { AuditContext } from "@/lib/audit/schemas";

export const REQUEST_ID_HEADER = "x-request-id";

export interface RequestContext extends AuditContext {
  requestId: string;
  ipAddress: string;
  userAgent: string | null;
}

/** A caller's own request id is kept when it is short and plain (so a scoring service can correlate
 * its logs with ours); anything else is replaced by a new one. */
export function requestIdOf(headers: Headers): string {
  const given = headers.get(REQUEST_ID_HEADER);
  return given && /^[A-Za-z0-9._:-]{8,100}$/.test(given) ? given : randomUUID();
}

/** The client's address: the last entry of X-Forwarded-For. Next's server fills that header from the
 * socket when no proxy did; behind one reverse proxy that appends to it, the last entry is the address
 * that proxy saw. Deployments with more proxies should make the nearest one overwrite the header. */
export function clientAddressOf(headers: Headers): string {
  const forwarded = headers.get("x-forwarded-for");
  const last = forwarded?.split(",").map((part) => part.trim()).filter(Boolean).at(-1);
  return (last ?? headers.get("x-real-ip") ?? "unknown").slice(0, 100);
}

export function requestContextOf(headers: Headers): RequestContext {
  return { requestId: requestIdOf(headers), ipAddress: clientAddressOf(headers), userAgent: headers.get("user-agent")?.slice(0, 500) ?? null };
}
