import { describe, expect, it } from "vitest";
import { auditQueryString, compactAuditFilter, parseAuditQuery } from "@/lib/audit/audit-query";
import { csvField, csvRecord } from "@/lib/audit/export-audit-events";

describe("the audit filter in the URL", () => {
  it("ignores empty fields a GET form sends, trims the rest and applies the default page size", () => {
    const { filter, page } = parseAuditQuery(new URLSearchParams("actor=+kim%40example.org+&action=&alert=&from=2026-11-01&to=&preset="));
    expect(filter).toEqual({ actor: "kim@example.org", from: "2026-11-01" });
    expect(page).toEqual({ limit: 50 });
  });

  it("takes the first value of a repeated parameter, as Next's searchParams gives them", () => {
    expect(parseAuditQuery({ action: ["alert.claimed", "outcome.recorded"] }).filter).toEqual({ action: "alert.claimed" });
  });

  it("writes a filter back in a fixed order, with paging, and leaves out the default page size", () => {
    const filter = { to: "2026-11-30", actor: "kim@example.org", preset: "cleared_by" as const };
    expect(compactAuditFilter(filter)).toEqual({ preset: "cleared_by", actor: "kim@example.org", to: "2026-11-30" });
    expect(auditQueryString(filter, { before: "120", limit: 50 })).toBe("?preset=cleared_by&actor=kim%40example.org&to=2026-11-30&before=120");
    expect(auditQueryString({}, { limit: 200 })).toBe("?limit=200");
    expect(auditQueryString({})).toBe("");
  });

  it("round-trips through its own query string", () => {
    const query = "?preset=cleared_alert&alert=TX-1&from=2026-11-01T00%3A00%3A00Z&after=7&limit=20";
    const { filter, page } = parseAuditQuery(new URLSearchParams(query));
    expect(auditQueryString(filter, page)).toBe(query);
  });
});

describe("CSV fields (RFC 4180 §2)", () => {
  it("leaves plain fields bare and writes null as an empty field", () => {
    expect(csvRecord(["a", null, "b c"])).toBe("a,,b c\r\n");
  });

  it("quotes fields with commas, quotes, CR or LF and doubles inner quotes", () => {
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField("line\r\nbreak")).toBe('"line\r\nbreak"');
    expect(csvField("only\nlf")).toBe('"only\nlf"');
  });
});
