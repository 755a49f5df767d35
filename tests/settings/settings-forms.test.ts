// The Settings screen's forms: what people type (major units, percent, one reason per line) becomes
// the stored groups, and every mistake is reported under the field it came from.
import { describe, expect, it } from "vitest";
import { defaultSettings, queueSettingsSchema } from "@/lib/settings/schemas";
import {
  calibrationSettingsFromForm,
  costSettingsFromForm,
  formFieldForSettingsPath,
  majorUnitsText,
  queueSettingsFromForm,
} from "@/lib/settings/settings-forms";

const channels = ["card_present", "card_not_present", "atm"];
const queueForm = {
  orderMode: "loss_per_minute",
  bandFrom_0: "0",
  bandHours_0: "48",
  bandFrom_1: "500.00",
  bandHours_1: "4",
  bandFrom_2: "50.10",
  bandHours_2: "24",
  bandFrom_3: "",
  bandHours_3: "",
  expectedHandlingMinutes: "6",
  handling_card_present: "",
  handling_card_not_present: "9.5",
  handling_atm: "",
  claimLeaseMinutes: "30",
  maxHeldPerAnalyst: "3",
  fourEyesExposure: "2,000.00",
  reasons_confirmed_fraud: "Cardholder denies\r\n\r\n  Known compromised card  \n",
  reasons_legitimate: "Cardholder confirmed",
  reasons_inconclusive: "Unreachable",
};

describe("queue settings form", () => {
  it("turns major units, minutes and lines into the stored group", () => {
    const result = queueSettingsFromForm(queueForm, { currency: "EUR", channels });
    expect(result).toEqual({
      ok: true,
      value: {
        orderMode: "loss_per_minute",
        // Sorted by where they start; 50.10 EUR is 5,010 minor units exactly (parsed as digits, not 50.1 × 100).
        slaBands: [
          { minExpectedLossMinor: 0, slaHours: 48 },
          { minExpectedLossMinor: 5_010, slaHours: 24 },
          { minExpectedLossMinor: 50_000, slaHours: 4 },
        ],
        expectedHandlingMinutes: 6,
        handlingMinutesByChannel: { card_not_present: 9.5 },
        claimLeaseMinutes: 30,
        maxHeldPerAnalyst: 3,
        fourEyesExposureMinor: 200_000,
        outcomeReasons: { confirmed_fraud: ["Cardholder denies", "Known compromised card"], legitimate: ["Cardholder confirmed"], inconclusive: ["Unreachable"] },
      },
    });
    if (result.ok) expect(queueSettingsSchema.safeParse(result.value).success).toBe(true);
  });

  it("names each field that needs another look", () => {
    const result = queueSettingsFromForm(
      { ...queueForm, bandFrom_0: "10", bandHours_1: "", maxHeldPerAnalyst: "2.5", fourEyesExposure: "12.345", reasons_legitimate: " \n ", orderMode: "score" },
      { currency: "EUR", channels },
    );
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(Object.fromEntries(result.issues.map((issue) => [issue.path, issue.message]))).toEqual({
      orderMode: "Choose how the queue is ordered.",
      bandHours_1: "Enter a number.",
      slaBands: "One band must start at an expected loss of 0.",
      maxHeldPerAnalyst: "Enter a whole number.",
      fourEyesExposure: "Enter an amount in EUR such as 1234.50.",
      reasons_legitimate: "Give at least one reason, one per line.",
    });
  });

  it("refuses two bands that start at the same expected loss", () => {
    const result = queueSettingsFromForm({ ...queueForm, bandFrom_2: "500" }, { currency: "EUR", channels });
    expect(result).toEqual({ ok: false, issues: [{ path: "slaBands", message: "Two bands start at the same expected loss." }] });
  });

  it("uses the currency's own minor unit: yen have none", () => {
    const result = queueSettingsFromForm({ ...queueForm, bandFrom_1: "5000", bandFrom_2: "", bandHours_2: "", fourEyesExposure: "200000" }, { currency: "JPY", channels });
    expect(result.ok && result.value.slaBands[1]).toEqual({ minExpectedLossMinor: 5_000, slaHours: 4 });
    // "500.00" yen: a yen has no minor unit to give decimals to.
    expect(queueSettingsFromForm(queueForm, { currency: "JPY", channels }).ok).toBe(false);
  });
});

describe("cost settings form", () => {
  it("reads recovery rates in percent and the review cost to a hundredth of a cent", () => {
    const result = costSettingsFromForm(
      { recovery_card_present: "30", recovery_card_not_present: "12.5", recovery_atm: "0", fixedCostPerFraud: "15.00", reviewCostPerMinute: "0.8050" },
      { current: defaultSettings.costs, channels },
    );
    expect(result).toEqual({
      ok: true,
      value: { ...defaultSettings.costs, recoveryRateByChannel: { card_present: 0.3, card_not_present: 0.125, atm: 0 }, fixedCostPerFraudMinor: 1_500, reviewCostPerMinuteMinor: 80.5 },
    });
  });

  it("refuses a recovery rate above 100%", () => {
    const result = costSettingsFromForm(
      { recovery_card_present: "130", recovery_card_not_present: "10", recovery_atm: "0", fixedCostPerFraud: "15", reviewCostPerMinute: "0.80" },
      { current: defaultSettings.costs, channels },
    );
    expect(result).toEqual({ ok: false, issues: [{ path: "recovery_card_present", message: "Enter a number from 0 to 100." }] });
  });
});

describe("calibration settings form", () => {
  it("reads three whole numbers", () => {
    expect(calibrationSettingsFromForm({ minLabels: "200", minPerClass: "20", refitAfterNewOutcomes: "100" })).toEqual({
      ok: true,
      value: { minLabels: 200, minPerClass: 20, refitAfterNewOutcomes: 100 },
    });
    expect(calibrationSettingsFromForm({ minLabels: "1", minPerClass: "0", refitAfterNewOutcomes: "x" })).toMatchObject({
      ok: false,
      issues: [{ path: "minLabels" }, { path: "minPerClass" }, { path: "refitAfterNewOutcomes" }],
    });
  });
});

describe("display and error placement", () => {
  it("shows minor units as major units", () => {
    expect(majorUnitsText(5_000, "EUR")).toBe("50.00");
    expect(majorUnitsText(80.5, "EUR")).toBe("0.805");
    expect(majorUnitsText(5_000, "JPY")).toBe("5000");
  });

  it("puts a stored group's problem under its form field", () => {
    expect(formFieldForSettingsPath("slaBands.1.slaHours")).toBe("bandHours_1");
    expect(formFieldForSettingsPath("slaBands")).toBe("slaBands");
    expect(formFieldForSettingsPath("outcomeReasons.legitimate.0")).toBe("reasons_legitimate");
    expect(formFieldForSettingsPath("recoveryRateByChannel.atm")).toBe("recovery_atm");
    expect(formFieldForSettingsPath("claimLeaseMinutes")).toBe("claimLeaseMinutes");
  });
});
