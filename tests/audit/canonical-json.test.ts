import { describe, expect, it } from "vitest";
import { canonicalJson } from "@/lib/audit/canonical-json";

describe("canonical JSON", () => {
  it("sorts object keys at every depth, so key order never matters", () => {
    const a = { b: 1, a: { d: [1, { z: true, y: null }], c: "x" } };
    const b = { a: { c: "x", d: [1, { y: null, z: true }] }, b: 1 };
    expect(canonicalJson(a)).toBe('{"a":{"c":"x","d":[1,{"y":null,"z":true}]},"b":1}');
    expect(canonicalJson(b)).toBe(canonicalJson(a));
  });

  it("keeps array order, because order inside a list is meaningful", () => {
    expect(canonicalJson([2, 1])).not.toBe(canonicalJson([1, 2]));
  });

  it("sorts keys by UTF-16 code unit, not by locale", () => {
    expect(canonicalJson({ b: 1, B: 2, a: 3, "é": 4, _: 5 })).toBe('{"B":2,"_":5,"a":3,"b":1,"é":4}');
  });

  it("writes no whitespace and escapes strings as JSON does", () => {
    expect(canonicalJson({ text: 'line "one"\nline two', n: -0.5 })).toBe('{"n":-0.5,"text":"line \\"one\\"\\nline two"}');
  });

  it("writes dates as ISO 8601 UTC strings and bigints as strings", () => {
    expect(canonicalJson({ at: new Date("2026-12-01T00:00:00.000Z"), id: BigInt("9007199254740993") })).toBe(
      '{"at":"2026-12-01T00:00:00.000Z","id":"9007199254740993"}',
    );
  });

  it("drops undefined object members as JSON.stringify does, so the stored jsonb and the hash agree", () => {
    const value = { kept: 1, dropped: undefined };
    expect(canonicalJson(value)).toBe('{"kept":1}');
    expect(JSON.parse(JSON.stringify(value))).toEqual({ kept: 1 });
  });

  it("tells null apart from the string 'null' and numbers from numeric strings", () => {
    expect(canonicalJson({ v: null })).not.toBe(canonicalJson({ v: "null" }));
    expect(canonicalJson({ v: 1 })).not.toBe(canonicalJson({ v: "1" }));
  });

  it("refuses numbers that JSON cannot carry", () => {
    expect(() => canonicalJson({ v: Number.NaN })).toThrow(RangeError);
    expect(() => canonicalJson({ v: Number.POSITIVE_INFINITY })).toThrow(RangeError);
  });

  it("serialises a value the same way after a JSON round trip (what jsonb storage does to it)", () => {
    const value = { brier: 0.1234567890123456, big: 1e21, tiny: 5e-324, unicode: "Zoë ✓ \u2028", nested: [{ b: 2, a: 1 }] };
    expect(canonicalJson(JSON.parse(JSON.stringify(value)))).toBe(canonicalJson(value));
  });
});
