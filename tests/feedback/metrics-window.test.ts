import { describe, expect, it } from "vitest";
import { bucketsOf, resolveMetricsWindow } from "@/lib/feedback/metrics-window";
import { parseModelVersionMetricsQuery, parseWindowQuery, windowQueryEntries } from "@/lib/feedback/parse-metrics-query";

const now = new Date("2026-12-02T12:00:00Z"); // a Wednesday
const resolve = (query: string, labelMaturityDays = 120) => resolveMetricsWindow(parseWindowQuery(new URLSearchParams(query)), { now, labelMaturityDays });

describe("metrics window", () => {
  it("defaults to the last 28 days, today included, in daily buckets", () => {
    const window = resolve("");
    expect(window).toMatchObject({ kind: "custom", days: 28, bucket: "day", mature: false });
    expect(window.from.toISOString()).toBe("2026-11-05T00:00:00.000Z");
    expect(window.to.toISOString()).toBe("2026-12-03T00:00:00.000Z");
  });

  it("takes the UTC day of `date`, or today", () => {
    expect(resolve("window=day&date=2026-02-28").to.toISOString()).toBe("2026-03-01T00:00:00.000Z");
    expect(resolve("window=day").from.toISOString()).toBe("2026-12-02T00:00:00.000Z");
  });

  it("takes the ISO week (Monday to Sunday) that holds `date`, a Sunday included", () => {
    // 2026-07-12 is a Sunday: its week started on Monday 07-06.
    expect(resolve("window=week&date=2026-07-12").from.toISOString()).toBe("2026-07-06T00:00:00.000Z");
    expect(resolve("window=week&date=2026-07-13").from.toISOString()).toBe("2026-07-13T00:00:00.000Z");
    expect(resolve("window=week").from.toISOString()).toBe("2026-11-30T00:00:00.000Z");
  });

  it("steps by week beyond 62 days unless told otherwise, and cuts the last bucket at the window's end", () => {
    const window = resolve("from=2026-01-01&to=2026-03-31");
    expect(window).toMatchObject({ days: 90, bucket: "week" });
    const buckets = bucketsOf(window, "week");
    expect(buckets).toHaveLength(13);
    expect(buckets[12].to.toISOString()).toBe("2026-04-01T00:00:00.000Z");
    expect(buckets[12].from.toISOString()).toBe("2026-03-26T00:00:00.000Z");
    expect(resolve("from=2026-01-01&to=2026-03-31&bucket=day").bucket).toBe("day");
  });

  it("is mature only when it ended at least labelMaturityDays ago", () => {
    // now − 120 days = 2026-08-04T12:00Z.
    expect(resolve("from=2026-07-01&to=2026-08-03").mature).toBe(true);
    expect(resolve("from=2026-07-01&to=2026-08-04").mature).toBe(false);
    expect(resolve("window=day", 0).mature).toBe(false);
    expect(resolve("window=day&date=2026-12-01", 0).mature).toBe(true);
  });

  it("refuses windows longer than two years", () => {
    expect(() => resolve("from=2020-01-01&to=2026-01-01")).toThrow(/at most 731/);
  });
});

describe("metrics query in the URL", () => {
  it("names the parameter that is wrong", () => {
    expect(() => parseWindowQuery(new URLSearchParams("window=month"))).toThrow(/window: expected day, week or custom/);
    expect(() => parseWindowQuery(new URLSearchParams("from=2026-02-30"))).toThrow(/from: not a real calendar date/);
    expect(() => parseWindowQuery(new URLSearchParams("from=2026-03-02&to=2026-03-01"))).toThrow(/to: must not be earlier than from/);
    expect(() => parseWindowQuery(new URLSearchParams("window=day&from=2026-03-01"))).toThrow(/from and to go with window=custom/);
    expect(() => parseModelVersionMetricsQuery(new URLSearchParams("modelVersionId=abc"))).toThrow(/modelVersionId.0: expected a model version id/);
    expect(() => parseModelVersionMetricsQuery(new URLSearchParams("driftCurrentDays=0"))).toThrow(/driftCurrentDays: must be at least 1 day/);
  });

  it("reads repeated model versions and drift days, from a URL or a page's searchParams alike", () => {
    const ids = ["0b6c3f8e-6a6e-4c59-9a2e-1d1f3c1f0a01", "0b6c3f8e-6a6e-4c59-9a2e-1d1f3c1f0a02"];
    const fromUrl = parseModelVersionMetricsQuery(new URLSearchParams(`modelVersionId=${ids[0]}&modelVersionId=${ids[1]}&driftCurrentDays=7`));
    const fromPage = parseModelVersionMetricsQuery({ modelVersionId: ids, driftCurrentDays: "7", from: "" });
    expect(fromUrl).toEqual(fromPage);
    expect(fromUrl).toMatchObject({ window: "custom", modelVersionId: ids, driftCurrentDays: 7, driftReferenceDays: 28 });
  });

  it("writes the window back in a fixed order for links", () => {
    expect(windowQueryEntries(parseWindowQuery(new URLSearchParams("bucket=week&to=2026-03-01&from=2026-01-01")))).toEqual([
      ["from", "2026-01-01"],
      ["to", "2026-03-01"],
      ["bucket", "week"],
    ]);
    expect(windowQueryEntries(parseWindowQuery(new URLSearchParams("window=day&date=2026-03-01")))).toEqual([
      ["window", "day"],
      ["date", "2026-03-01"],
    ]);
  });
});
