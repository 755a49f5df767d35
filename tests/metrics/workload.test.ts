import { describe, expect, it } from "vitest";
import { median, projectedBreaches, timeToClearHours } from "@/lib/metrics";

describe("median handling time", () => {
  it("takes the middle value, or the mean of the two middle values", () => {
    // Hand-worked: [12, 3, 7] sorted 3, 7, 12 → 7; [40, 5, 10, 20] sorted 5, 10, 20, 40 → 15.
    expect(median([12, 3, 7])).toBe(7);
    expect(median([40, 5, 10, 20])).toBe(15);
  });

  it("is not pulled up by one alert left open over a weekend", () => {
    expect(median([10, 11, 12, 13, 4000])).toBe(12);
  });

  it("has no value without closed alerts and rejects values that are not numbers", () => {
    expect(median([])).toBeNull();
    expect(() => median([1, Number.NaN])).toThrow(/values\[1\]/);
  });

  it("does not reorder the caller's array", () => {
    const values = [3, 1, 2];
    median(values);
    expect(values).toEqual([3, 1, 2]);
  });
});

describe("time to clear the backlog", () => {
  it("divides open alerts by the team's hourly closing capacity", () => {
    // Hand-worked: 120 open / (4 analysts × 6 alerts per analyst-hour = 24 per hour) = 5 hours.
    expect(timeToClearHours({ openAlerts: 120, analystsOnShift: 4, closingRatePerAnalystPerHour: 6 })).toBe(5);
  });

  it("has no value when nobody is closing alerts, and is zero for an empty backlog", () => {
    expect(timeToClearHours({ openAlerts: 10, analystsOnShift: 3, closingRatePerAnalystPerHour: 0 })).toBeNull();
    expect(timeToClearHours({ openAlerts: 10, analystsOnShift: 0, closingRatePerAnalystPerHour: 5 })).toBeNull();
    expect(timeToClearHours({ openAlerts: 0, analystsOnShift: 0, closingRatePerAnalystPerHour: 0 })).toBe(0);
  });

  it("rejects negative or fractional counts and negative rates", () => {
    expect(() => timeToClearHours({ openAlerts: -1, analystsOnShift: 1, closingRatePerAnalystPerHour: 1 })).toThrow(
      /openAlerts/,
    );
    expect(() => timeToClearHours({ openAlerts: 1, analystsOnShift: 1.5, closingRatePerAnalystPerHour: 1 })).toThrow(
      /analystsOnShift/,
    );
    expect(() => timeToClearHours({ openAlerts: 1, analystsOnShift: 1, closingRatePerAnalystPerHour: -2 })).toThrow(
      /closingRatePerAnalystPerHour/,
    );
  });
});

describe("projected SLA breaches", () => {
  const now = new Date("2024-03-01T12:00:00Z");
  const at = (hhmm: string) => new Date(`2024-03-01T${hhmm}:00Z`);
  // Passed out of order on purpose: the function works them in due order.
  const dueTimes = [at("13:20"), at("11:00"), at("16:00"), at("13:00"), at("14:10"), at("13:55")];

  it("counts alerts that will pass their due time before they are reached", () => {
    // Hand-worked at 2 alerts per hour (one every 30 minutes), horizon 2 h (until 14:00).
    // Due order and closing times:
    //   11:00 closed 12:30 — already past due at 12:00, not counted, but it takes the first slot
    //   13:00 closed 13:00 — on time (closing at the due time is not a breach)
    //   13:20 closed 13:30 — breach
    //   13:55 closed 14:00 — breach
    //   14:10 closed 14:30 — late, but its due time is after the horizon
    //   16:00 closed 15:00 — on time
    expect(projectedBreaches({ dueTimes, now, horizonHours: 2, closingRatePerHour: 2 })).toBe(2);
    // Horizon 3 h (until 15:00): 14:10 now counts as well.
    expect(projectedBreaches({ dueTimes, now, horizonHours: 3, closingRatePerHour: 2 })).toBe(3);
  });

  it("counts the capacity that alerts already past due take up", () => {
    // Hand-worked: without the 11:00 alert, 13:00 closes 12:30, 13:20 at 13:00, 13:55 at 13:30 —
    // all on time within the 2 h horizon.
    const withoutOverdue = dueTimes.filter((d) => d.getTime() !== at("11:00").getTime());
    expect(projectedBreaches({ dueTimes: withoutOverdue, now, horizonHours: 2, closingRatePerHour: 2 })).toBe(0);
  });

  it("takes alerts already past due as a count, with the same answer as listing them", () => {
    // The hand-worked case above, with the 11:00 alert given as pastDueCount instead of a date.
    const withoutOverdue = dueTimes.filter((d) => d.getTime() !== at("11:00").getTime());
    expect(projectedBreaches({ dueTimes: withoutOverdue, now, horizonHours: 2, closingRatePerHour: 2, pastDueCount: 1 })).toBe(2);
    // Hand-worked: three past due take 12:00–13:30; 13:00 closes 14:00 (breach), 13:20 at 14:30 (breach),
    // 13:55 at 15:00 (breach); 14:10 is outside the 2 h horizon.
    expect(projectedBreaches({ dueTimes: withoutOverdue, now, horizonHours: 2, closingRatePerHour: 2, pastDueCount: 3 })).toBe(3);
    expect(() => projectedBreaches({ dueTimes, now, horizonHours: 2, closingRatePerHour: 2, pastDueCount: -1 })).toThrow(/pastDueCount/);
  });

  it("with nobody closing, counts every alert falling due within the horizon", () => {
    // Due in (12:00, 14:00]: 13:00, 13:20, 13:55.
    expect(projectedBreaches({ dueTimes, now, horizonHours: 2, closingRatePerHour: 0 })).toBe(3);
  });

  it("counts nothing over a zero horizon or for an empty backlog", () => {
    expect(projectedBreaches({ dueTimes, now, horizonHours: 0, closingRatePerHour: 2 })).toBe(0);
    expect(projectedBreaches({ dueTimes: [], now, horizonHours: 8, closingRatePerHour: 2 })).toBe(0);
  });

  it("treats an alert due exactly now as already past due", () => {
    expect(projectedBreaches({ dueTimes: [now], now, horizonHours: 1, closingRatePerHour: 0 })).toBe(0);
  });

  it("rejects invalid dates and negative horizons or rates", () => {
    expect(() => projectedBreaches({ dueTimes: [new Date("nope")], now, horizonHours: 1, closingRatePerHour: 1 })).toThrow(
      /dueTimes\[0\]/,
    );
    expect(() => projectedBreaches({ dueTimes, now: new Date(Number.NaN), horizonHours: 1, closingRatePerHour: 1 })).toThrow(
      /now/,
    );
    expect(() => projectedBreaches({ dueTimes, now, horizonHours: -1, closingRatePerHour: 1 })).toThrow(/horizonHours/);
    expect(() => projectedBreaches({ dueTimes, now, horizonHours: 1, closingRatePerHour: -1 })).toThrow(
      /closingRatePerHour/,
    );
  });
});
