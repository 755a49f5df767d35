import { describe, expect, it } from "vitest";
import { assertSlaBands, dueAt, slaHoursForExpectedLoss, type SlaBand } from "@/lib/risk/due-time";
import { seededRandom } from "./seeded-random";

// Bands deliberately out of order: the rule is "greatest minimum ≤ EL", not list position.
const bands: SlaBand[] = [
  { minExpectedLossMinor: 100_000, slaHours: 4 },
  { minExpectedLossMinor: 0, slaHours: 72 },
  { minExpectedLossMinor: 10_000, slaHours: 24 },
];

describe("due time from expected-loss bands", () => {
  it("picks the band with the greatest minimum not above the expected loss", () => {
    // Hand-worked against the bands above.
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 0, bands })).toBe(72);
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 9_999.99, bands })).toBe(72);
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 10_000, bands })).toBe(24); // boundary belongs to the upper band
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 99_999, bands })).toBe(24);
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 100_000, bands })).toBe(4);
    expect(slaHoursForExpectedLoss({ expectedLossMinor: 5e9, bands })).toBe(4);
  });

  it("adds the band's hours to the arrival time", () => {
    const arrivedAt = new Date("2024-03-01T10:00:00.000Z");
    // EL 25000 → 24 h band: 2024-03-01T10:00Z + 24 h = 2024-03-02T10:00Z.
    expect(dueAt({ arrivedAt, expectedLossMinor: 25_000, bands }).toISOString()).toBe("2024-03-02T10:00:00.000Z");
    // EL 0 → 72 h, across the end of February in a leap year: 2024-03-04T10:00Z.
    expect(dueAt({ arrivedAt, expectedLossMinor: 0, bands }).toISOString()).toBe("2024-03-04T10:00:00.000Z");
    // Fractional hours: 1.5 h = 90 min.
    const halfBands = [{ minExpectedLossMinor: 0, slaHours: 1.5 }];
    expect(dueAt({ arrivedAt, expectedLossMinor: 1, bands: halfBands }).toISOString()).toBe("2024-03-01T11:30:00.000Z");
    // The input date is not mutated.
    expect(arrivedAt.toISOString()).toBe("2024-03-01T10:00:00.000Z");
  });

  it("agrees with a brute-force reading of the band rule on random bands", () => {
    const random = seededRandom(11);
    for (let round = 0; round < 500; round++) {
      const starts = new Set<number>([0]);
      while (starts.size < 1 + Math.floor(random() * 6)) starts.add(Math.floor(random() * 50) * 1_000);
      const randomBands = [...starts].map((m) => ({ minExpectedLossMinor: m, slaHours: 1 + Math.floor(random() * 96) }));
      const el = random() * 60_000;
      const applicable = randomBands.filter((b) => b.minExpectedLossMinor <= el).sort((a, b) => b.minExpectedLossMinor - a.minExpectedLossMinor)[0];
      const arrivedAt = new Date(Date.UTC(2024, 0, 1) + Math.floor(random() * 1e10));
      const due = dueAt({ arrivedAt, expectedLossMinor: el, bands: randomBands });
      expect(due.getTime() - arrivedAt.getTime()).toBe(applicable.slaHours * 3_600_000);
    }
  });

  it("rejects band lists that leave a gap or overlap, and impossible inputs", () => {
    expect(() => assertSlaBands([])).toThrow(/non-empty/);
    expect(() => assertSlaBands([{ minExpectedLossMinor: 10, slaHours: 4 }])).toThrow(/start at an expected loss of 0/);
    expect(() =>
      assertSlaBands([
        { minExpectedLossMinor: 0, slaHours: 4 },
        { minExpectedLossMinor: 0, slaHours: 8 },
      ]),
    ).toThrow(/same expected loss/);
    expect(() => assertSlaBands([{ minExpectedLossMinor: 0, slaHours: 0 }])).toThrow(/slaHours must be > 0/);
    expect(() => assertSlaBands([{ minExpectedLossMinor: 0, slaHours: -2 }])).toThrow(RangeError);
    expect(() => assertSlaBands([{ minExpectedLossMinor: 0, slaHours: Number.NaN }])).toThrow(RangeError);
    expect(() => assertSlaBands([{ minExpectedLossMinor: 0, slaHours: 1 }, { minExpectedLossMinor: -5, slaHours: 1 }])).toThrow(RangeError);
    expect(() => slaHoursForExpectedLoss({ expectedLossMinor: Number.NaN, bands })).toThrow(RangeError);
    expect(() => slaHoursForExpectedLoss({ expectedLossMinor: -1, bands })).toThrow(RangeError);
    expect(() => dueAt({ arrivedAt: new Date(Number.NaN), expectedLossMinor: 1, bands })).toThrow(/arrivedAt/);
  });
});
