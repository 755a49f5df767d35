import { describe, expect, it } from "vitest";
import { sortIndicesByValueStable } from "@/lib/risk/stable-index-sort";
import { seededRandom, shuffled } from "./seeded-random";

// Reference: Array.prototype.sort with a numeric comparator, which ECMAScript requires to be stable
// since ES2019 (from memory). Equal values must keep their input order.
function referenceOrder(indices: readonly number[], values: readonly number[]): number[] {
  return [...indices].sort((a, b) => (values[a] < values[b] ? -1 : values[a] > values[b] ? 1 : 0));
}

describe("stable sort of indices by a float key", () => {
  it("orders like a stable comparison sort on awkward values", () => {
    const values = [0, -0, 1, -1, 1e-300, -1e-300, Number.MAX_VALUE, -Number.MAX_VALUE, 5e-324, 0.5, 0.5, -0, 0, 2 ** 53, 1 / 3];
    const indices = values.map((_, i) => i);
    expect(Array.from(sortIndicesByValueStable(Uint32Array.from(indices), values))).toEqual(referenceOrder(indices, values));
  });

  it("orders like a stable comparison sort on random data with many ties", () => {
    const random = seededRandom(3);
    for (let round = 0; round < 30; round++) {
      const n = 1 + Math.floor(random() * 3000);
      const values = Array.from({ length: n }, () => Math.round((random() - 0.3) * 40) / 8);
      // A subset of positions in scrambled order, as after dropping zero-weight points and a first pass.
      const indices = shuffled(
        values.map((_, i) => i).filter(() => random() < 0.8),
        random,
      );
      expect(Array.from(sortIndicesByValueStable(Uint32Array.from(indices), values))).toEqual(referenceOrder(indices, values));
    }
  });

  it("returns an empty order for no indices", () => {
    expect(sortIndicesByValueStable(new Uint32Array(0), [])).toHaveLength(0);
  });
});
