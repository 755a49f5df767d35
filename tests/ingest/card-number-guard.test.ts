import { describe, expect, it } from "vitest";
import {
  findCardNumbers,
  formatFieldPath,
  looksLikeFullCardNumber,
  maskCardNumber,
  passesLuhn,
} from "@/lib/ingest/card-number-guard";

// Published test card numbers, each list named by where it is published. None is a real account.
// Braintree Ruby SDK, Braintree::Test::CreditCardNumbers (rubydoc.info/gems/braintree/2.49.0/Braintree/Test/CreditCardNumbers):
const SDK_TEST_NUMBERS = [
  "378282246310005",
  "371449635398431",
  "378734493671000",
  "30569309025904",
  "38520000023237",
  "6011111111111117",
  "6011000990139424",
  "3530111333300000",
  "3566002020360505",
  "5105105105105100",
  "5555555555554444",
  "4009348888881881",
  "4012888888881881",
  "4111111111111111",
  "4000111111111115",
  "4500600000000061",
];
// Testing guide, developer.cybersource.com/hello-world/testing-guide-v1.html ("Testing card numbers"),
// chosen for their lengths: 14, 15, 18 and 19 digits (written there in groups with spaces).
const GUIDE_TEST_NUMBERS = ["50339619890917", "135412345678911", "586824160825533338", "6759560045005727054"];
// Test cards table, docs.nmi.com/docs/integration-guide-test-and-deploy: a 19-digit number.
const NINETEEN_DIGIT_TEST_NUMBER = "6799990100000000019";
// A 13-digit test number, from memory (long listed as a 13-digit test number in processor sandboxes).
const THIRTEEN_DIGIT_TEST_NUMBER = "4222222222222";

const ALL_TEST_NUMBERS = [...SDK_TEST_NUMBERS, ...GUIDE_TEST_NUMBERS, NINETEEN_DIGIT_TEST_NUMBER, THIRTEEN_DIGIT_TEST_NUMBER];

/** Replaces the check digit with the next one (mod 10): one wrong digit, which Luhn always detects. */
function withWrongCheckDigit(pan: string): string {
  const last = Number(pan[pan.length - 1]);
  return pan.slice(0, -1) + String((last + 1) % 10);
}

// Small seeded generator (mulberry32) so that property runs are repeatable.
function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Check digit by the textbook recipe, written independently of the code under test: starting from the
 * rightmost payload digit, double every other digit, add the digits of the products, and take
 * (10 − sum mod 10) mod 10 (Wikipedia, "Luhn algorithm", computing the check digit).
 */
function luhnCheckDigit(payload: string): string {
  let sum = 0;
  [...payload].reverse().forEach((ch, index) => {
    const d = Number(ch);
    if (index % 2 === 0) {
      const doubled = d * 2;
      sum += Math.floor(doubled / 10) + (doubled % 10);
    } else {
      sum += d;
    }
  });
  return String((10 - (sum % 10)) % 10);
}

/** Splits a number into groups of 3–6 digits, the way card numbers are printed. */
function printedGroups(pan: string, random: () => number): string[] {
  const groups: string[] = [];
  let i = 0;
  while (pan.length - i > 6) {
    const rest = pan.length - i;
    let size = 3 + Math.floor(random() * 4);
    if (rest - size < 3) size = rest - 3; // leave at least 3 digits for the last group
    groups.push(pan.slice(i, i + size));
    i += size;
  }
  groups.push(pan.slice(i));
  return groups;
}

function randomPan(random: () => number): string {
  const length = 13 + Math.floor(random() * 7); // 13..19
  let payload = "";
  for (let i = 0; i < length - 1; i++) payload += String(Math.floor(random() * 10));
  return payload + luhnCheckDigit(payload);
}

describe("Luhn check (ISO/IEC 7812-1 Annex B)", () => {
  it("accepts the worked example 79927398713 and rejects every other check digit", () => {
    // Account number 7992739871 with check digit 3: the worked example of Wikipedia, "Luhn algorithm",
    // reproduced widely; attributed to ISO/IEC 7812-1 Annex B (the standard's text was not checked here).
    expect(passesLuhn("79927398713")).toBe(true);
    for (const wrong of "012456789") expect(passesLuhn(`7992739871${wrong}`)).toBe(false);
  });

  it("accepts every published test card number", () => {
    for (const pan of ALL_TEST_NUMBERS) expect(passesLuhn(pan), pan).toBe(true);
  });

  it("rejects each published test card number with its check digit changed", () => {
    // Luhn detects every single-digit error (Wikipedia, "Luhn algorithm", from memory).
    for (const pan of ALL_TEST_NUMBERS) expect(passesLuhn(withWrongCheckDigit(pan)), pan).toBe(false);
  });

  it("rejects input that is not a string of at least two ASCII digits", () => {
    expect(passesLuhn("")).toBe(false);
    expect(passesLuhn("0")).toBe(false);
    expect(passesLuhn("4111 1111 1111 1111")).toBe(false);
    expect(passesLuhn("4111-1111-1111-1111")).toBe(false);
  });
});

describe("looksLikeFullCardNumber", () => {
  it("flags every published test card number, bare, grouped with spaces and grouped with hyphens", () => {
    for (const pan of ALL_TEST_NUMBERS) {
      expect(looksLikeFullCardNumber(pan), pan).toBe(true);
      expect(looksLikeFullCardNumber(pan.replace(/(\d{4})(?=\d)/g, "$1 ")), pan).toBe(true);
      expect(looksLikeFullCardNumber(pan.replace(/(\d{4})(?=\d)/g, "$1-")), pan).toBe(true);
    }
    // Written as the testing guide prints it (source above).
    expect(looksLikeFullCardNumber("6759 5600 4500 5727 054")).toBe(true);
    expect(looksLikeFullCardNumber("3782 822463 10005")).toBe(true);
    // Cut every 4 digits, leaving a short last group.
    expect(looksLikeFullCardNumber("4222 2222 2222 2")).toBe(true);
    expect(looksLikeFullCardNumber("3056-9309-0259-04")).toBe(true);
  });

  it("finds a card number embedded in free text", () => {
    expect(looksLikeFullCardNumber("card 4111 1111 1111 1111 used")).toBe(true);
    expect(looksLikeFullCardNumber("tok_5555555555554444")).toBe(true);
    expect(looksLikeFullCardNumber("refund for 378282246310005, see note")).toBe(true);
  });

  it("finds a card number right after a short number separated by one space", () => {
    // "2 4111111111111111" is one run of 17 digits that fails Luhn as a whole; the card number is a whole group.
    expect(passesLuhn("24111111111111111")).toBe(false);
    expect(looksLikeFullCardNumber("qty 2 4111111111111111")).toBe(true);
    expect(looksLikeFullCardNumber("ref 12 4111 1111 1111 1111")).toBe(true);
  });

  it("does not read an unseparated run of more than 19 digits as a card number", () => {
    // 22 digits whose middle 16 pass Luhn: a reference number, not a PAN (ISO/IEC 7812-1 PANs have at
    // most 19 digits). Chargeback references (23-digit acquirer reference numbers, from memory of the
    // card schemes' dispute formats) would otherwise be rejected almost always.
    expect(looksLikeFullCardNumber("0004111111111111111199")).toBe(false);
    expect(looksLikeFullCardNumber("ARN 24445005301200023456789")).toBe(false);
    // The same digits separated from their neighbours are caught.
    expect(looksLikeFullCardNumber("000 4111111111111111 99")).toBe(true);
  });

  it("reads full-width digits and no-break spaces as plain ones", () => {
    expect(looksLikeFullCardNumber("４１１１１１１１１１１１１１１１")).toBe(true);
    expect(looksLikeFullCardNumber("4111\u00a01111\u00a01111\u00a01111")).toBe(true);
  });

  it("accepts masked numbers, tokens without card numbers, and numbers that fail Luhn", () => {
    expect(looksLikeFullCardNumber("411111******1111")).toBe(false);
    expect(looksLikeFullCardNumber("4111 11•• •••• 1111")).toBe(false);
    expect(looksLikeFullCardNumber("tok_7f3a9c2e")).toBe(false);
    expect(looksLikeFullCardNumber(withWrongCheckDigit("4111111111111111"))).toBe(false);
    expect(looksLikeFullCardNumber("2025-03-01T14:05:00Z")).toBe(false);
  });

  it("does not count numbers of 12 digits or fewer, even when they pass Luhn", () => {
    expect(passesLuhn("79927398713")).toBe(true); // 11 digits, source above
    expect(looksLikeFullCardNumber("79927398713")).toBe(false);
    const twelve = "12345678901" + luhnCheckDigit("12345678901");
    expect(passesLuhn(twelve)).toBe(true);
    expect(looksLikeFullCardNumber(twelve)).toBe(false);
  });

  it("joins digits only across a single space or hyphen", () => {
    // Groups of 4 separated by two spaces are separate runs, each too short to be a card number.
    expect(looksLikeFullCardNumber("4111  1111  1111  1111")).toBe(false);
    expect(looksLikeFullCardNumber("4111 - 1111 - 1111 - 1111")).toBe(false);
  });

  it("joins only groups of 3–6 digits, so date-and-sequence identifiers are not read as card numbers", () => {
    // A date and a sequence number whose 14 digits pass Luhn when joined; an 8-digit group is no printed card grouping.
    const sequence = "00059" + luhnCheckDigit("2025112000059");
    expect(passesLuhn(`20251120${sequence}`)).toBe(true);
    expect(looksLikeFullCardNumber(`lk-20251120-${sequence}`)).toBe(false);
    expect(looksLikeFullCardNumber(`lk-20251120${sequence}`)).toBe(true); // unseparated, it is 14 digits passing Luhn
    // The same limit means an unusual 8-8 grouping of a card number is not caught.
    expect(looksLikeFullCardNumber("41111111-11111111")).toBe(false);
  });

  it("property: identifiers made of a date and a sequence number are never flagged", () => {
    const random = seededRandom(18245);
    for (let k = 0; k < 3000; k++) {
      const day = new Date(Date.UTC(2020, 0, 1) + Math.floor(random() * 3650) * 86_400_000).toISOString().slice(0, 10);
      const sequence = String(Math.floor(random() * 1_000_000)).padStart(6, "0");
      expect(looksLikeFullCardNumber(`lk-${day.replaceAll("-", "")}-${sequence}`)).toBe(false);
      expect(looksLikeFullCardNumber(`${day}-${sequence}`)).toBe(false);
    }
  });
});

describe("property: a 13–19 digit number with a valid Luhn check digit is always caught", () => {
  const random = seededRandom(20250301);
  const runs = 3000;

  it("caught bare, grouped, embedded in text, and as a JSON number when exactly representable", () => {
    for (let k = 0; k < runs; k++) {
      const pan = randomPan(random);
      expect(passesLuhn(pan), pan).toBe(true);
      expect(looksLikeFullCardNumber(pan), pan).toBe(true);

      // Random printed grouping (groups of 3–6 digits) with single spaces or hyphens.
      const grouped = printedGroups(pan, random)
        .map((group, index) => (index === 0 ? "" : random() < 0.5 ? " " : "-") + group)
        .join("");
      expect(looksLikeFullCardNumber(grouped), grouped).toBe(true);
      expect(looksLikeFullCardNumber(`paid with ${grouped} at the counter`), grouped).toBe(true);

      const asNumber = Number(pan);
      if (Number.isSafeInteger(asNumber) && String(asNumber) === pan) {
        expect(findCardNumbers({ entityRef: asNumber }), pan).toEqual([{ path: "entityRef", masked: maskCardNumber(pan) }]);
      }
    }
  });

  it("a wrong check digit is never accepted by Luhn", () => {
    for (let k = 0; k < runs; k++) {
      const pan = randomPan(random);
      for (const d of "0123456789") {
        if (d === pan[pan.length - 1]) continue;
        expect(passesLuhn(pan.slice(0, -1) + d), pan).toBe(false);
      }
    }
  });
});

describe("maskCardNumber (PCI DSS v4.0.1 requirement 3.4.1: at most the BIN and the last four digits)", () => {
  it("keeps the first 6 and last 4 digits of a 16-digit number", () => {
    expect(maskCardNumber("4111111111111111")).toBe("411111******1111");
    expect(maskCardNumber("4111 1111 1111 1111")).toBe("411111******1111");
    expect(maskCardNumber(5555555555554444)).toBe("555555******4444");
  });

  it("masks 13- and 19-digit numbers the same way", () => {
    expect(maskCardNumber(THIRTEEN_DIGIT_TEST_NUMBER)).toBe("422222***2222");
    expect(maskCardNumber(NINETEEN_DIGIT_TEST_NUMBER)).toBe("679999*********0019");
  });

  it("masks values too short to be card numbers entirely", () => {
    expect(maskCardNumber("123456789012")).toBe("************");
    expect(maskCardNumber("1234")).toBe("****");
  });

  it("never reveals more than the first 6 and last 4 digits (property over random card numbers)", () => {
    const random = seededRandom(7812);
    for (let k = 0; k < 2000; k++) {
      const pan = randomPan(random);
      const masked = maskCardNumber(pan);
      expect(masked.length).toBe(pan.length);
      expect(masked.replace(/\*/g, "").length).toBeLessThanOrEqual(10);
      expect(masked.slice(0, 6)).toBe(pan.slice(0, 6));
      expect(masked.slice(-4)).toBe(pan.slice(-4));
      expect(masked.slice(6, -4)).toMatch(/^\*+$/);
    }
  });
});

describe("findCardNumbers", () => {
  it("returns nothing for a clean row", () => {
    const row = {
      externalId: "tx-000183",
      entityRef: "tok_9c1e77",
      amountMinor: 125_00,
      score: 0.9731,
      reasonCodes: [{ code: "velocity_24h", contribution: 0.41 }],
      occurredAt: "2025-03-01T14:05:00Z",
    };
    expect(findCardNumbers(row)).toEqual([]);
  });

  it("reports nested fields by path, masked", () => {
    const row = {
      externalId: "tx-1",
      reasonCodes: [{ code: "ok", contribution: 0.1 }, { code: "seen 5555-5555-5555-4444 twice", contribution: 0.2 }],
      meta: { "card number": "4111 1111 1111 1111" },
    };
    expect(findCardNumbers(row)).toEqual([
      { path: "reasonCodes[1].code", masked: "555555******4444" },
      { path: 'meta["card number"]', masked: "411111******1111" },
    ]);
  });

  it("catches a card number sent as a JSON number", () => {
    const row = JSON.parse('{"entityRef": 4111111111111111, "amountMinor": 1200}') as unknown;
    expect(findCardNumbers(row)).toEqual([{ path: "entityRef", masked: "411111******1111" }]);
  });

  it("treats a 19-digit JSON number as a card number although its last digits were lost in parsing", () => {
    const row = JSON.parse(`{"entityRef": ${NINETEEN_DIGIT_TEST_NUMBER}}`) as { entityRef: number };
    expect(Number.isSafeInteger(row.entityRef)).toBe(false);
    const findings = findCardNumbers(row);
    expect(findings).toHaveLength(1);
    expect(findings[0].path).toBe("entityRef");
    expect(findings[0].masked.replace(/\*/g, "").length).toBeLessThanOrEqual(10);
  });

  it("does not flag fractional numbers such as model scores", () => {
    expect(findCardNumbers({ score: 0.4111111111111111, contribution: -0.5555555555554444 })).toEqual([]);
  });

  it("checks object keys too, and masks them in the path", () => {
    const findings = findCardNumbers({ extra: { "4111111111111111": "seen" } });
    expect(findings).toEqual([{ path: 'extra["411111******1111"]', masked: "411111******1111" }]);
  });

  it("never returns the raw digits", () => {
    const row = { a: "4111111111111111", b: [{ c: 5555555555554444 }], d: { "378282246310005": 1 } };
    const text = JSON.stringify(findCardNumbers(row));
    for (const raw of ["4111111111111111", "5555555555554444", "378282246310005"]) expect(text).not.toContain(raw);
  });

  it("checks a bare string row, reported at the empty path", () => {
    expect(findCardNumbers("4111111111111111")).toEqual([{ path: "", masked: "411111******1111" }]);
  });

  it("survives very deep nesting", () => {
    let deep: unknown = "4111111111111111";
    for (let i = 0; i < 20_000; i++) deep = [deep];
    const findings = findCardNumbers({ deep });
    expect(findings).toHaveLength(1);
    expect(findings[0].path.startsWith("deep[0][0]")).toBe(true);
  });
});

describe("formatFieldPath", () => {
  it("writes paths the way a developer would", () => {
    expect(formatFieldPath(["reasonCodes", 0, "code"])).toBe("reasonCodes[0].code");
    expect(formatFieldPath([])).toBe("");
    expect(formatFieldPath([3])).toBe("[3]");
    expect(formatFieldPath(["meta", "merchant name"])).toBe('meta["merchant name"]');
  });
});
