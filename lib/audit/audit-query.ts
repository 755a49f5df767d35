// The audit trail's filter and paging as they travel in a URL: parsed with the zod schemas of
// lib/audit/schemas.ts, and written back in one fixed order so a shared link stays readable.
import { AppError } from "@/lib/errors";
import { AUDIT_PAGE_SIZE_DEFAULT, auditFilterSchema, auditPageSchema, type AuditFilter, type AuditPage } from "@/lib/audit/schemas";

export type SearchParamsInput = URLSearchParams | Record<string, string | string[] | undefined>;

const filterKeys = ["preset", "actor", "action", "alert", "from", "to"] as const satisfies readonly (keyof AuditFilter)[];

function plain(input: SearchParamsInput): Record<string, string> {
  const result: Record<string, string> = {};
  if (input instanceof URLSearchParams) {
    for (const [key, value] of input) result[key] ??= value;
  } else {
    for (const [key, value] of Object.entries(input)) {
      const first = Array.isArray(value) ? value[0] : value;
      if (first !== undefined) result[key] = first;
    }
  }
  return result;
}

/** Parses a query string into a filter and a page; a bad value is an invalid_input naming its field. */
export function parseAuditQuery(input: SearchParamsInput): { filter: AuditFilter; page: AuditPage } {
  const values = plain(input);
  const filter = auditFilterSchema.safeParse(values);
  const page = auditPageSchema.safeParse(values);
  const issues = [...(filter.error?.issues ?? []), ...(page.error?.issues ?? [])].map((issue) => ({ path: issue.path.join("."), message: issue.message }));
  if (!filter.success || !page.success) {
    throw new AppError("invalid_input", `The audit filter is not valid: ${issues.map((issue) => `${issue.path}: ${issue.message}`).join("; ")}`, issues);
  }
  return { filter: filter.data, page: page.data };
}

/** The filter with only the fields that were given, in a fixed order: what audit events record. */
export function compactAuditFilter(filter: AuditFilter): Record<string, string> {
  const compact: Record<string, string> = {};
  for (const key of filterKeys) {
    const value = filter[key];
    if (value !== undefined) compact[key] = value;
  }
  return compact;
}

/** Query string for a filter (and optionally a page); the page size is written only when not the default. */
export function auditQueryString(filter: AuditFilter, page: Partial<AuditPage> = {}, extra: Record<string, string> = {}): string {
  const params = new URLSearchParams(compactAuditFilter(filter));
  if (page.before) params.set("before", page.before);
  if (page.after) params.set("after", page.after);
  if (page.limit !== undefined && page.limit !== AUDIT_PAGE_SIZE_DEFAULT) params.set("limit", String(page.limit));
  for (const [key, value] of Object.entries(extra)) params.set(key, value);
  const text = params.toString();
  return text ? `?${text}` : "";
}
