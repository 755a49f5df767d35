import { describe, expect, it } from "vitest";
import { closingRate } from "@/lib/metrics/closing-rate";

const now = new Date("2026-12-02T12:00:00Z");
const at = (hhmm: string) => new Date(`2026-12-02T${hhmm}:00Z`);

describe("an analyst's closing rate", () => {
  it("divides reviews closed by the hours at work since the first activity in the window", () => {
    // Hand-worked: at work since 08:00, 4 reviews by 12:00 → 4 / 4 h = 1 an hour.
    expect(closingRate({ reviewsClosed: 4, activeSince: at("08:00"), now, windowHours: 8 })).toEqual({ perHour: 1, hoursAtWork: 4 });
    // Since 10:00, 3 reviews → 3 / 2 h = 1.5 an hour.
    expect(closingRate({ reviewsClosed: 3, activeSince: at("10:00"), now, windowHours: 8 }).perHour).toBe(1.5);
  });

  it("never measures over more than the window", () => {
    // Active since 01:00 but the window is 8 h (04:00–12:00): 16 reviews / 8 h = 2 an hour.
    expect(closingRate({ reviewsClosed: 16, activeSince: at("01:00"), now, windowHours: 8 })).toEqual({ perHour: 2, hoursAtWork: 8 });
    expect(closingRate({ reviewsClosed: 16, activeSince: null, now, windowHours: 8 }).hoursAtWork).toBe(8);
  });

  it("measures over at least an hour, so a quick start does not read as a sprint", () => {
    // Two reviews since 11:45: 15 minutes would give 8 an hour; the floor of 1 h gives 2.
    expect(closingRate({ reviewsClosed: 2, activeSince: at("11:45"), now, windowHours: 8 })).toEqual({ perHour: 2, hoursAtWork: 1 });
  });

  it("is zero without reviews and rejects malformed input", () => {
    expect(closingRate({ reviewsClosed: 0, activeSince: at("09:00"), now, windowHours: 8 }).perHour).toBe(0);
    expect(() => closingRate({ reviewsClosed: -1, activeSince: null, now, windowHours: 8 })).toThrow(/reviewsClosed/);
    expect(() => closingRate({ reviewsClosed: 1, activeSince: null, now, windowHours: 0.5 })).toThrow(/minimumHours/);
    expect(() => closingRate({ reviewsClosed: 1, activeSince: new Date(Number.NaN), now, windowHours: 8 })).toThrow(/activeSince/);
  });
});
