// The Settings screen's forms ↔ the settings groups. People type money in major units of the home
// currency ("50.00"), recovery rates in percent and outcome reasons one per line; the stored groups
// hold minor units, shares and lists. Each problem is reported under the form field it came from.
import { z } from "zod";
import type { FieldIssue } from "@/lib/errors";
import type { Settings } from "@/lib/settings/schemas";

/** A form as formValues() returns it: one value → a string, several → an array. */
export const rawFormSchema = z.record(z.string(), z.union([z.string(), z.array(z.string())]));
export type RawForm = z.infer<typeof rawFormSchema>;

export type FormConversion<T> = { ok: true; value: T } | { ok: false; issues: FieldIssue[] };

/** Rows offered for SLA bands: the saved ones plus empty ones, up to this many. */
export const SLA_BAND_ROWS = 6;
export const OUTCOME_KINDS = ["confirmed_fraud", "legitimate", "inconclusive"] as const;

export const bandFromField = (row: number) => `bandFrom_${row}`;
export const bandHoursField = (row: number) => `bandHours_${row}`;
export const handlingField = (channel: string) => `handling_${channel}`;
export const recoveryField = (channel: string) => `recovery_${channel}`;
export const reasonsField = (outcome: (typeof OUTCOME_KINDS)[number]) => `reasons_${outcome}`;

/** Digits after the decimal point of a currency's minor unit (EUR 2, JPY 0, BHD 3). */
export function currencyMinorDigits(currency: string): number {
  try {
    return new Intl.NumberFormat("en", { style: "currency", currency }).resolvedOptions().maximumFractionDigits ?? 2;
  } catch {
    return 2;
  }
}

/** Minor units as a person types them: 5000 EUR → "50.00"; fractional minor units keep their digits. */
export function majorUnitsText(minor: number, currency: string): string {
  const digits = currencyMinorDigits(currency);
  const major = minor / 10 ** digits;
  const fixed = major.toFixed(digits);
  return Number(fixed) === major ? fixed : String(major);
}

class FormReader {
  readonly issues: FieldIssue[] = [];
  constructor(private readonly raw: RawForm) {}

  text(field: string): string {
    const value = this.raw[field];
    return (Array.isArray(value) ? value[0] : (value ?? "")).trim();
  }

  fail(field: string, message: string): undefined {
    this.issues.push({ path: field, message });
    return undefined;
  }

  number(field: string, { min, max, integer = false, blank }: { min: number; max: number; integer?: boolean; blank?: "allowed" }): number | undefined {
    const text = this.text(field);
    if (text === "") return blank === "allowed" ? undefined : this.fail(field, "Enter a number.");
    if (!/^\d+(\.\d+)?$/.test(text)) return this.fail(field, integer ? "Enter a whole number." : "Enter a number such as 12 or 2.5.");
    const value = Number(text);
    if (integer && !Number.isInteger(value)) return this.fail(field, "Enter a whole number.");
    if (value < min || value > max) return this.fail(field, `Enter a number from ${min} to ${max}.`);
    return value;
  }

  /** An amount in major units of `currency`, returned in minor units, parsed digit by digit (no binary rounding). */
  money(field: string, currency: string, { extraDigits = 0, blank }: { extraDigits?: number; blank?: "allowed" } = {}): number | undefined {
    const text = this.text(field).replaceAll(",", "");
    if (text === "") return blank === "allowed" ? undefined : this.fail(field, `Enter an amount in ${currency}.`);
    const minorDigits = currencyMinorDigits(currency);
    const match = /^(\d+)(?:\.(\d+))?$/.exec(text);
    if (!match || (match[2] ?? "").length > minorDigits + extraDigits) {
      const example = minorDigits === 0 ? "1234" : `1234.${"5".padEnd(minorDigits, "0")}`;
      return this.fail(field, `Enter an amount in ${currency} such as ${example}${extraDigits > 0 ? ` (up to ${minorDigits + extraDigits} decimals)` : ""}.`);
    }
    const fraction = (match[2] ?? "").padEnd(minorDigits + extraDigits, "0");
    const whole = Number(match[1] + fraction.slice(0, minorDigits));
    const minor = extraDigits === 0 ? whole : whole + Number(fraction.slice(minorDigits)) / 10 ** extraDigits;
    if (!Number.isSafeInteger(whole)) return this.fail(field, "That amount is too large.");
    return minor;
  }

  lines(field: string): string[] {
    return this.text(field)
      .split(/\r?\n/)
      .map((line) => line.trim())
      .filter((line) => line !== "");
  }
}

function done<T>(reader: FormReader, build: () => T): FormConversion<T> {
  return reader.issues.length > 0 ? { ok: false, issues: reader.issues } : { ok: true, value: build() };
}

export function queueSettingsFromForm(raw: RawForm, { currency, channels }: { currency: string; channels: readonly string[] }): FormConversion<Settings["queue"]> {
  const form = new FormReader(raw);
  const orderMode = form.text("orderMode");
  if (orderMode !== "expected_loss" && orderMode !== "loss_per_minute") form.fail("orderMode", "Choose how the queue is ordered.");

  const slaBands: Settings["queue"]["slaBands"] = [];
  for (let row = 0; row < SLA_BAND_ROWS; row++) {
    if (form.text(bandFromField(row)) === "" && form.text(bandHoursField(row)) === "") continue;
    const minExpectedLossMinor = form.money(bandFromField(row), currency);
    const slaHours = form.number(bandHoursField(row), { min: 0.25, max: 720 });
    if (minExpectedLossMinor !== undefined && slaHours !== undefined) {
      slaBands.push({ minExpectedLossMinor, slaHours });
    }
  }
  if (slaBands.length === 0) form.fail("slaBands", "Give at least one band, starting at 0.");
  else if (!slaBands.some((band) => band.minExpectedLossMinor === 0)) form.fail("slaBands", "One band must start at an expected loss of 0.");
  else if (new Set(slaBands.map((band) => band.minExpectedLossMinor)).size !== slaBands.length) form.fail("slaBands", "Two bands start at the same expected loss.");

  const expectedHandlingMinutes = form.number("expectedHandlingMinutes", { min: 0.5, max: 600 });
  const handlingMinutesByChannel: Record<string, number> = {};
  for (const channel of channels) {
    const minutes = form.number(handlingField(channel), { min: 0.5, max: 600, blank: "allowed" });
    if (minutes !== undefined) handlingMinutesByChannel[channel] = minutes;
  }
  const claimLeaseMinutes = form.number("claimLeaseMinutes", { min: 1, max: 1440, integer: true });
  const maxHeldPerAnalyst = form.number("maxHeldPerAnalyst", { min: 1, max: 50, integer: true });
  const fourEyesExposureMinor = form.money("fourEyesExposure", currency);
  const outcomeReasons = {} as Settings["queue"]["outcomeReasons"];
  for (const outcome of OUTCOME_KINDS) {
    const reasons = form.lines(reasonsField(outcome));
    if (reasons.length === 0) form.fail(reasonsField(outcome), "Give at least one reason, one per line.");
    else if (reasons.length > 20) form.fail(reasonsField(outcome), "At most 20 reasons.");
    else if (reasons.some((reason) => reason.length > 200)) form.fail(reasonsField(outcome), "Each reason at most 200 characters.");
    outcomeReasons[outcome] = reasons;
  }
  return done(form, () => ({
    orderMode: orderMode as Settings["queue"]["orderMode"],
    slaBands: [...slaBands].sort((a, b) => a.minExpectedLossMinor - b.minExpectedLossMinor),
    expectedHandlingMinutes: expectedHandlingMinutes!,
    handlingMinutesByChannel,
    claimLeaseMinutes: claimLeaseMinutes!,
    maxHeldPerAnalyst: maxHeldPerAnalyst!,
    fourEyesExposureMinor: fourEyesExposureMinor!,
    outcomeReasons,
  }));
}

export function costSettingsFromForm(raw: RawForm, { current, channels }: { current: Settings["costs"]; channels: readonly string[] }): FormConversion<Settings["costs"]> {
  const form = new FormReader(raw);
  const currency = current.homeCurrency;
  const recoveryRateByChannel: Record<string, number> = {};
  for (const channel of channels) {
    const percent = form.number(recoveryField(channel), { min: 0, max: 100 });
    if (percent !== undefined) recoveryRateByChannel[channel] = Math.round(percent * 100) / 10_000;
  }
  const fixedCostPerFraudMinor = form.money("fixedCostPerFraud", currency);
  // A minute of review may cost a fraction of a cent, so two more decimals are accepted.
  const reviewCostPerMinuteMinor = form.money("reviewCostPerMinute", currency, { extraDigits: 2 });
  return done(form, () => ({
    ...current,
    recoveryRateByChannel,
    fixedCostPerFraudMinor: fixedCostPerFraudMinor!,
    reviewCostPerMinuteMinor: reviewCostPerMinuteMinor!,
  }));
}

export function calibrationSettingsFromForm(raw: RawForm): FormConversion<Settings["calibration"]> {
  const form = new FormReader(raw);
  const minLabels = form.number("minLabels", { min: 2, max: 1_000_000, integer: true });
  const minPerClass = form.number("minPerClass", { min: 1, max: 1_000_000, integer: true });
  const refitAfterNewOutcomes = form.number("refitAfterNewOutcomes", { min: 1, max: 1_000_000, integer: true });
  return done(form, () => ({ minLabels: minLabels!, minPerClass: minPerClass!, refitAfterNewOutcomes: refitAfterNewOutcomes! }));
}

/** Where a stored group's validation problem belongs on its form ("slaBands.0.slaHours" → "bandHours_0"). */
export function formFieldForSettingsPath(path: string): string {
  const [head, second, third] = path.split(".");
  switch (head) {
    case "slaBands":
      if (second !== undefined && third === "slaHours") return bandHoursField(Number(second));
      if (second !== undefined && third === "minExpectedLossMinor") return bandFromField(Number(second));
      return "slaBands";
    case "handlingMinutesByChannel":
      return second ? handlingField(second) : "form";
    case "outcomeReasons":
      return second ? `reasons_${second}` : "form";
    case "recoveryRateByChannel":
      return second ? recoveryField(second) : "form";
    case "fourEyesExposureMinor":
      return "fourEyesExposure";
    case "fixedCostPerFraudMinor":
      return "fixedCostPerFraud";
    case "reviewCostPerMinuteMinor":
      return "reviewCostPerMinute";
    default:
      return head || "form";
  }
}
