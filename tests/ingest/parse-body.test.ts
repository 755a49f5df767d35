import { describe, expect, it } from "vitest";
import {
  csvRecordToAlertInput,
  csvRecordToLabelInput,
  csvRecordToOutcomeInput,
  findJsonSyntaxError,
  parseCsv,
  parseJsonArrayBody,
  parseNdjsonBody,
} from "@/lib/ingest/parse-body";

describe("parseJsonArrayBody", () => {
  it("returns the rows of a JSON array", () => {
    expect(parseJsonArrayBody('[{"externalId":"a"},{"externalId":"b"}]')).toEqual({
      ok: true,
      rows: [{ externalId: "a" }, { externalId: "b" }],
    });
    expect(parseJsonArrayBody("\ufeff[]")).toEqual({ ok: true, rows: [] }); // a leading byte-order mark is ignored
  });

  it("rejects a body that is not an array", () => {
    expect(parseJsonArrayBody('{"externalId":"a"}')).toEqual({ ok: false, message: "expected a JSON array of rows, got an object" });
    expect(parseJsonArrayBody("   ")).toMatchObject({ ok: false, message: expect.stringMatching(/empty/) });
  });

  it("reports the line and column of a syntax error", () => {
    // Line 3 is `  {"b": 2,,}`: the second comma is column 11; offset = 2 ("[\n") + 12 (line 2 with "\n") + 10.
    const result = parseJsonArrayBody('[\n  {"a": 1},\n  {"b": 2,,}\n]');
    expect(result).toEqual({
      ok: false,
      message: "malformed JSON at line 3, column 11: expected a property name in double quotes, found ','",
      position: { line: 3, column: 11, offset: 24 },
    });
  });

  it("counts CRLF as one line break", () => {
    const result = parseJsonArrayBody('[\r\n  {"a": 1}\r\n  {"b": 2}\r\n]');
    expect(result).toMatchObject({ ok: false, position: { line: 3, column: 3, offset: 17 } }); // 3 ("[\r\n") + 12 + 2
  });

  it("points an unterminated string at its opening quote", () => {
    expect(parseJsonArrayBody('[{"a": "open}]')).toMatchObject({ ok: false, position: { line: 1, column: 8, offset: 7 } });
  });

  it("never quotes the body in its message", () => {
    // Some engines quote a slice of the input in JSON.parse errors; ours must not (the slice may hold a card number).
    const result = parseJsonArrayBody('[{"entityRef": 4111111111111111x}]');
    expect(result.ok).toBe(false);
    expect(JSON.stringify(result)).not.toContain("4111111111111111");
  });

  describe("syntax-error offsets agree with the JavaScript engine's JSON.parse where it reports one", () => {
    // [text, offset we expect (checked by hand against RFC 8259's grammar)]
    const cases: [string, number][] = [
      ["[1,2", 4],
      ['{"a":1,}', 7],
      ['[{"a" 1}]', 6],
      ["[01]", 2],
      ["[1.]", 3],
      ['["a\\x"]', 4],
      ["[1] 2", 4],
      ["{a:1}", 1],
      ["[-]", 2],
      ["[1e]", 3],
      ['["\\u12G4"]', 6],
      ['["a\tb"]', 3],
      ['{"a":1 "b":2}', 7],
      ["[1 2]", 3],
      ['{"a"}', 4],
      ["[1,]", 3],
      ["[1,,2]", 3],
      ["['x']", 1],
    ];
    it.each(cases)("%j fails at offset %i", (text, offset) => {
      let engineMessage = "";
      try {
        JSON.parse(text);
      } catch (error) {
        engineMessage = (error as Error).message;
      }
      expect(engineMessage).not.toBe(""); // the text really is malformed
      const problem = findJsonSyntaxError(text);
      expect(problem?.offset).toBe(offset);
      const engineOffset = /at position (\d+)/.exec(engineMessage);
      if (engineOffset) expect(problem?.offset).toBe(Number(engineOffset[1]));
    });

    it("finds no error in valid JSON", () => {
      for (const text of ['{"a":[1,-2.5e+3,true,false,null,"x\\u00e9\\n"]}', " [] ", '"s"', "0", '{"":{}}']) {
        expect(() => JSON.parse(text)).not.toThrow();
        expect(findJsonSyntaxError(text), text).toBeNull();
      }
    });
  });
});

describe("parseNdjsonBody", () => {
  it("returns one row per non-blank line with its line number", () => {
    const result = parseNdjsonBody('{"a":1}\r\n\r\n{"a":2}\n   \n{"a":3}\n');
    expect(result).toEqual({ ok: true, rows: [{ a: 1 }, { a: 2 }, { a: 3 }], lineNumbers: [1, 3, 5] });
  });

  it("names the line and column of a malformed line", () => {
    const result = parseNdjsonBody('{"a":1}\n{"a":2}\n\n{"a":3,}\n{"a":4}');
    expect(result).toMatchObject({
      ok: false,
      message: expect.stringMatching(/^line 4: malformed JSON at column 8: /),
      position: { line: 4, column: 8, offset: 24 },
    });
  });

  it("treats a line holding two values as malformed", () => {
    expect(parseNdjsonBody('{"a":1} {"a":2}')).toMatchObject({ ok: false, position: { line: 1, column: 9 } });
  });

  it("accepts an empty body as zero rows", () => {
    expect(parseNdjsonBody("")).toEqual({ ok: true, rows: [], lineNumbers: [] });
  });
});

describe("parseCsv (RFC 4180 §2)", () => {
  it("reads records delimited by CRLF, the last one with or without a line break (rules 1–3)", () => {
    expect(parseCsv("h1,h2,h3\r\naaa,bbb,ccc\r\nzzz,yyy,xxx")).toEqual({
      ok: true,
      header: ["h1", "h2", "h3"],
      rows: [
        { h1: "aaa", h2: "bbb", h3: "ccc" },
        { h1: "zzz", h2: "yyy", h3: "xxx" },
      ],
      lineNumbers: [2, 3],
    });
    expect(parseCsv("h1,h2,h3\naaa,bbb,ccc\n")).toMatchObject({ ok: true, rows: [{ h1: "aaa", h2: "bbb", h3: "ccc" }] });
  });

  it("keeps spaces as part of a field (rule 4)", () => {
    expect(parseCsv("a,b\n x , y\n")).toMatchObject({ ok: true, rows: [{ a: " x ", b: " y" }] });
  });

  it("reads fields enclosed in double quotes (rule 5 example)", () => {
    expect(parseCsv('a,b,c\r\n"aaa","bbb","ccc"\r\nzzz,yyy,xxx\r\n')).toMatchObject({
      ok: true,
      rows: [
        { a: "aaa", b: "bbb", c: "ccc" },
        { a: "zzz", b: "yyy", c: "xxx" },
      ],
    });
  });

  it("keeps line breaks and commas inside quoted fields (rule 6 example)", () => {
    const result = parseCsv('a,b,c\r\n"aaa","b\r\nbb","ccc"\r\nzzz,"y,y",xxx\r\n');
    expect(result).toEqual({
      ok: true,
      header: ["a", "b", "c"],
      rows: [
        { a: "aaa", b: "b\r\nbb", c: "ccc" },
        { a: "zzz", b: "y,y", c: "xxx" },
      ],
      lineNumbers: [2, 4], // the first record spans lines 2 and 3
    });
  });

  it("reads a doubled double quote inside a quoted field as one quote (rule 7 example)", () => {
    expect(parseCsv('a,b,c\r\n"aaa","b""bb","ccc"\r\n')).toMatchObject({ ok: true, rows: [{ a: "aaa", b: 'b"bb', c: "ccc" }] });
    expect(parseCsv('a\n""""\n')).toMatchObject({ ok: true, rows: [{ a: '"' }] });
    expect(parseCsv('a,b\n"",x\n')).toMatchObject({ ok: true, rows: [{ a: "", b: "x" }] });
  });

  it("rejects a double quote inside an unquoted field (rule 5)", () => {
    const result = parseCsv('a,b\nab"c,d\n');
    expect(result).toMatchObject({ ok: false, position: { line: 2, column: 3, offset: 6 } });
    expect(result.ok === false && result.message).toMatch(/rules 5 and 7/);
  });

  it("rejects text after a closing quote, i.e. an undoubled quote inside a quoted field (rule 7)", () => {
    expect(parseCsv('a,b\n"ab"c",d\n')).toMatchObject({ ok: false, position: { line: 2, column: 5 } });
  });

  it("rejects an unterminated quoted field, pointing at its opening quote", () => {
    expect(parseCsv('a,b\nx,"never closed\n')).toMatchObject({ ok: false, position: { line: 2, column: 3, offset: 6 } });
  });

  it("requires every record to have as many fields as the header (rule 4)", () => {
    const result = parseCsv("a,b,c\n1,2,3\n1,2\n");
    expect(result).toMatchObject({ ok: false, position: { line: 3, column: 1 } });
    expect(result.ok === false && result.message).toMatch(/2 fields but the header has 3/);
  });

  it("requires a header row with unique, non-empty names", () => {
    expect(parseCsv("")).toMatchObject({ ok: false, message: expect.stringMatching(/header row/) });
    expect(parseCsv("a,a\n1,2\n")).toMatchObject({ ok: false, message: expect.stringMatching(/"a" twice/) });
    // A header that is a card number is shown masked (published test number, see card-number-guard.test.ts).
    const twice = parseCsv("4111111111111111,4111111111111111\n1,2\n");
    expect(twice).toMatchObject({ ok: false, message: expect.stringMatching(/"411111\*{6}1111" twice/) });
    expect(parseCsv("a,,c\n1,2,3\n")).toMatchObject({ ok: false, message: expect.stringMatching(/column 2 has no name/) });
  });

  it("trims header names, skips empty lines and a byte-order mark", () => {
    expect(parseCsv("\ufeff externalId ,label\n\ntx-1,fraud\n\n")).toEqual({
      ok: true,
      header: ["externalId", "label"],
      rows: [{ externalId: "tx-1", label: "fraud" }],
      lineNumbers: [3],
    });
  });

  it("keeps a column named __proto__ as an ordinary field", () => {
    const result = parseCsv("__proto__,a\nx,y\n");
    expect(result.ok).toBe(true);
    if (result.ok) {
      expect(Object.getPrototypeOf(result.rows[0])).toBe(Object.prototype);
      expect(Object.keys(result.rows[0])).toEqual(["__proto__", "a"]);
    }
  });
});

describe("csvRecordToAlertInput", () => {
  it("converts numbers, booleans and reason codes, and leaves empty cells out", () => {
    expect(
      csvRecordToAlertInput({
        externalId: "tx-1",
        amountMinor: "12500",
        score: "0.87",
        belowTheLine: "TRUE",
        inclusionProbability: "0.02",
        reasonCodes: "velocity_24h:0.41; geo:mismatch:-0.1;",
        merchantCategoryCode: "0742",
        note: "",
      }),
    ).toEqual({
      externalId: "tx-1",
      amountMinor: 12500,
      score: 0.87,
      belowTheLine: true,
      inclusionProbability: 0.02,
      reasonCodes: [
        { code: "velocity_24h", contribution: 0.41 },
        { code: "geo:mismatch", contribution: -0.1 },
      ],
      merchantCategoryCode: "0742",
    });
  });

  it("reads belowTheLine from true/false/1/0", () => {
    for (const [cell, value] of [["true", true], ["1", true], ["false", false], ["0", false], ["False", false]] as const) {
      expect(csvRecordToAlertInput({ belowTheLine: cell }).belowTheLine, cell).toBe(value);
    }
    expect(csvRecordToAlertInput({ belowTheLine: "yes" }).belowTheLine).toBe("yes"); // left for validation to reject
  });

  it("keeps text that is not plainly a number, so validation can say so", () => {
    expect(csvRecordToAlertInput({ amountMinor: "12,50", score: "high", inclusionProbability: "0x1" })).toEqual({
      amountMinor: "12,50",
      score: "high",
      inclusionProbability: "0x1",
    });
  });

  it("keeps integers beyond 2^53 as text so that their digits reach the card-number guard unchanged", () => {
    expect(csvRecordToAlertInput({ amountMinor: "6759560045005727054" }).amountMinor).toBe("6759560045005727054");
  });

  it("leaves a reason code without a contribution for validation to report", () => {
    expect(csvRecordToAlertInput({ reasonCodes: "a:1;b" }).reasonCodes).toEqual([{ code: "a", contribution: 1 }, { code: "b" }]);
  });

  it("passes unknown columns through as text", () => {
    expect(csvRecordToAlertInput({ comment: "see case 12" })).toEqual({ comment: "see case 12" });
  });
});

describe("csvRecordToLabelInput and csvRecordToOutcomeInput", () => {
  it("keep text fields and drop empty cells", () => {
    expect(csvRecordToLabelInput({ externalId: "tx-1", label: "fraud", reference: "" })).toEqual({ externalId: "tx-1", label: "fraud" });
    expect(csvRecordToOutcomeInput({ externalId: "tx-1", secondOutcome: "", note: " " })).toEqual({ externalId: "tx-1", note: " " });
  });
});
