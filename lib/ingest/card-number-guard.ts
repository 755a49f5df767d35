// Guard against full card numbers (primary account numbers, PANs) reaching storage or screens.
// DESIGN.md §5: ingest rejects any field that looks like a PAN — 13 to 19 digits passing the Luhn check
// (ISO/IEC 7812-1) — and anything we show of such a value keeps at most the first 6 and last 4 digits
// (PCI DSS v4.0.1 requirement 3.4.1). Pure: no I/O, no clock.

const MIN_PAN_DIGITS = 13;
const MAX_PAN_DIGITS = 19;

/**
 * Luhn (mod 10) check of ISO/IEC 7812-1 Annex B: from the rightmost digit (the check digit) leftwards,
 * double every second digit, subtract 9 from any doubled value above 9, and the total must end in 0.
 * Accepts ASCII digits only and at least two of them (a payload plus its check digit).
 */
export function passesLuhn(digits: string): boolean {
  if (digits.length < 2 || !/^[0-9]+$/.test(digits)) return false;
  return luhnSum(digits, 0, digits.length) % 10 === 0;
}

function luhnSum(digits: string, start: number, end: number): number {
  let sum = 0;
  let double = false;
  for (let i = end - 1; i >= start; i--) {
    let d = digits.charCodeAt(i) - 48;
    if (double) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
    double = !double;
  }
  return sum;
}

/** A run of digits as written, with the digit count of each separator-delimited group. */
interface DigitRun {
  digits: string;
  groups: number[];
}

function isDigitCode(code: number): boolean {
  return code >= 48 && code <= 57;
}

/**
 * Splits text into runs of ASCII digits in which a single space or hyphen may sit between two digits
 * ("4111 1111-1111 1111" is one run of 16 digits in 4 groups). Anything else ends a run. The text is
 * NFKC-normalized first so that full-width digits and no-break spaces count as their plain forms.
 */
function digitRuns(text: string): DigitRun[] {
  const s = text.normalize("NFKC");
  const runs: DigitRun[] = [];
  let digits = "";
  let groups: number[] = [];
  let groupLength = 0;
  let pendingSeparator = false;

  const flush = () => {
    if (groupLength > 0) groups.push(groupLength);
    if (digits.length > 0) runs.push({ digits, groups });
    digits = "";
    groups = [];
    groupLength = 0;
    pendingSeparator = false;
  };

  for (let i = 0; i < s.length; i++) {
    const code = s.charCodeAt(i);
    if (isDigitCode(code)) {
      if (pendingSeparator) {
        groups.push(groupLength);
        groupLength = 0;
        pendingSeparator = false;
      }
      digits += s[i];
      groupLength++;
    } else if ((code === 32 || code === 45) && groupLength > 0 && !pendingSeparator) {
      pendingSeparator = true;
    } else {
      flush();
    }
  }
  flush();
  return runs;
}

/**
 * Card numbers are written in groups of 3 to 6 digits (4-4-4-4, 4-6-5, 4-6-4, 4-4-4-4-3), the last group
 * possibly shorter when a formatter cuts every 4 digits ("4222 2222 2222 2"). Only such groups are joined
 * across a separator; otherwise identifiers such as "20251120-000599" (a date and a sequence number)
 * would be read as one 14-digit number, and about one in ten would pass Luhn by chance.
 */
const MIN_PRINTED_GROUP = 3;
const MAX_PRINTED_GROUP = 6;

function isPrintedGroup(length: number): boolean {
  return length >= MIN_PRINTED_GROUP && length <= MAX_PRINTED_GROUP;
}

function passesLuhnAt(digits: string, start: number, length: number): boolean {
  return luhnSum(digits, start, start + length) % 10 === 0;
}

/**
 * Candidate PANs inside one run:
 * - each unseparated group of 13–19 digits (longer unseparated runs are references, not card numbers);
 * - every span of two or more consecutive groups with 13–19 digits in all, each group of 3–6 digits
 *   except the last, which may have 1–6. This covers the usual printed forms and a card number right
 *   after a short number ("qty 2 4111 1111 1111 1111").
 */
function findPanInRun(run: DigitRun): string | null {
  const { digits, groups } = run;
  if (digits.length < MIN_PAN_DIGITS) return null;

  let groupStart = 0;
  for (const length of groups) {
    if (length >= MIN_PAN_DIGITS && length <= MAX_PAN_DIGITS && passesLuhnAt(digits, groupStart, length)) {
      return digits.slice(groupStart, groupStart + length);
    }
    // An unseparated run longer than 19 digits is not a card number: chargeback references
    // (23-digit acquirer reference numbers) are such runs, and nearly every one of them has some
    // 13–19 digit window that passes Luhn by chance.
    groupStart += length;
  }

  groupStart = 0;
  for (let g = 0; g < groups.length; g++) {
    if (isPrintedGroup(groups[g])) {
      let length = groups[g];
      for (let h = g + 1; h < groups.length && groups[h] <= MAX_PRINTED_GROUP; h++) {
        length += groups[h];
        if (length > MAX_PAN_DIGITS) break;
        if (length >= MIN_PAN_DIGITS && passesLuhnAt(digits, groupStart, length)) {
          return digits.slice(groupStart, groupStart + length);
        }
        if (!isPrintedGroup(groups[h])) break; // a short group can only end a span
      }
    }
    groupStart += groups[g];
  }
  return null;
}

/**
 * True when `text` cannot hold a card number without looking further: plain ASCII with fewer than
 * 13 digits. Most fields (names, codes, ids, timestamps) end here, before the NFKC normalisation and
 * run splitting, which cost several microseconds a field — a third of ingest's JavaScript time.
 * Any character outside ASCII (full-width digits, no-break spaces) takes the full path.
 */
function tooFewDigitsForPan(text: string): boolean {
  let digits = 0;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code > 127) return false;
    if (code >= 48 && code <= 57 && ++digits >= MIN_PAN_DIGITS) return false;
  }
  return true;
}

/** The first digit sequence inside `value` that looks like a full card number, or null. */
function findPanInText(value: string): string | null {
  if (tooFewDigitsForPan(value)) return null;
  for (const run of digitRuns(value)) {
    const found = findPanInRun(run);
    if (found !== null) return found;
  }
  return null;
}

/**
 * True when the value is, or contains, something that looks like a full card number: 13–19 digits that
 * pass the Luhn check, either unseparated or written in groups of 3–6 digits (the last may be shorter)
 * joined by single spaces or hyphens. Embedded numbers count ("card 4111 1111 1111 1111 used"); an unseparated run of more than
 * 19 digits does not (it is some other reference, such as a 23-digit acquirer reference number).
 */
export function looksLikeFullCardNumber(value: string): boolean {
  return findPanInText(value) !== null;
}

/**
 * Digits of a number-typed field that may be a PAN sent as a JSON number, or null when it cannot be one.
 * Fractions cannot be card numbers (model scores such as 0.4111111111111111 must not trip the guard).
 * Integers above 2^53 have lost digits during JSON parsing, so their check digit cannot be verified;
 * those with 13–19 digits are treated as card numbers to stay on the safe side.
 */
function panOfNumber(value: number): string | null {
  if (!Number.isInteger(value)) return null;
  const magnitude = Math.abs(value);
  if (magnitude < 1e12) return null;
  if (Number.isSafeInteger(magnitude)) return findPanInText(String(magnitude));
  if (magnitude < 1e19) return BigInt(magnitude).toString();
  return null;
}

function panOfBigInt(value: bigint): string | null {
  return findPanInText((value < BigInt(0) ? -value : value).toString());
}

/**
 * Masks the digits of a value so that at most the first 6 and the last 4 remain (PCI DSS v4.0.1
 * requirement 3.4.1); every other digit becomes '*'. Non-digit characters are dropped. Values with
 * fewer than 13 digits are not card numbers and are masked entirely, since keeping 6 + 4 of them would
 * show nearly all of it.
 */
export function maskCardNumber(value: string | number): string {
  const digits = (typeof value === "number" ? numberDigits(value) : value.normalize("NFKC")).replace(/[^0-9]/g, "");
  if (digits.length < MIN_PAN_DIGITS) return "*".repeat(digits.length);
  return digits.slice(0, 6) + "*".repeat(digits.length - 10) + digits.slice(-4);
}

function numberDigits(value: number): string {
  if (!Number.isFinite(value)) return "";
  if (Number.isInteger(value)) return BigInt(Math.abs(value)).toString();
  return String(Math.abs(value));
}

const IDENTIFIER = /^[A-Za-z_$][A-Za-z0-9_$]*$/;

/**
 * Formats a field path the way a developer would write it: `reasonCodes[0].code`. Keys that are not
 * identifiers are quoted (`meta["merchant name"]`); an empty path (the row itself) is "".
 */
export function formatFieldPath(path: readonly PropertyKey[]): string {
  let out = "";
  for (const segment of path) {
    if (typeof segment === "number") out += `[${segment}]`;
    else if (typeof segment === "symbol") out += `[${String(segment)}]`;
    else if (IDENTIFIER.test(segment)) out += out === "" ? segment : `.${segment}`;
    else out += `[${JSON.stringify(segment)}]`;
  }
  return out;
}

export interface CardNumberFinding {
  /** Where the value sits in the row, e.g. `reasonCodes[0].code`; keys that look like PANs are masked. */
  path: string;
  /** The card-number-like digits, masked to at most the first 6 and last 4. */
  masked: string;
}

interface PathNode {
  parent: PathNode | null;
  segment: string | number;
}

function pathOf(node: PathNode | null): string {
  const segments: (string | number)[] = [];
  for (let n = node; n !== null; n = n.parent) segments.push(n.segment);
  return formatFieldPath(segments.reverse());
}

/**
 * Walks every string and number in a parsed JSON row (object keys included) and returns one finding per
 * field that looks like a full card number. Paths never contain the raw number: a key that looks like one
 * is shown masked. Iterative, so deeply nested input cannot overflow the stack.
 */
export function findCardNumbers(obj: unknown): CardNumberFinding[] {
  const findings: CardNumberFinding[] = [];
  const seen = new WeakSet<object>();
  // keyPan: the key under which this value sits looks like a card number itself.
  type Item = { value: unknown; path: PathNode | null; keyPan: string | null };
  const stack: Item[] = [{ value: obj, path: null, keyPan: null }];

  while (stack.length > 0) {
    const { value, path, keyPan } = stack.pop()!;
    if (keyPan !== null) findings.push({ path: pathOf(path), masked: maskCardNumber(keyPan) });

    let pan: string | null = null;
    if (typeof value === "string") pan = findPanInText(value);
    else if (typeof value === "number") pan = panOfNumber(value);
    else if (typeof value === "bigint") pan = panOfBigInt(value);
    else if (typeof value === "object" && value !== null && !(value instanceof Date)) {
      if (seen.has(value)) continue;
      seen.add(value);
      const children: Item[] = [];
      if (Array.isArray(value)) {
        value.forEach((item, index) => children.push({ value: item, path: { parent: path, segment: index }, keyPan: null }));
      } else {
        for (const [key, item] of Object.entries(value)) {
          const found = findPanInText(key);
          const segment = found === null ? key : maskCardNumber(key);
          children.push({ value: item, path: { parent: path, segment }, keyPan: found });
        }
      }
      // Pushed in reverse so that findings come out in document order.
      for (let i = children.length - 1; i >= 0; i--) stack.push(children[i]);
      continue;
    }
    if (pan !== null) findings.push({ path: pathOf(path), masked: maskCardNumber(pan) });
  }
  return findings;
}
