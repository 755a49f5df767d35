// The invented demo scenario of Larkmoor Savings & Card: ~60 days of model-flagged card
// transactions, with outcomes that follow a hidden true fraud probability, late chargebacks
// and customer reports (some overturning cleared alerts), below-the-line samples, second
// reviews, score drift in the anomaly detector over the last two weeks, and a live queue.
// Pure and deterministic: the same seed and anchor time give the same rows.
import { demoPeople } from "@/demo-data/people";
import { seededRandom, type Random } from "@/demo-data/random";

export const DEMO_SEED = 20261202;

export interface DemoModelVersion {
  modelName: string;
  version: string;
  scoreKind: "probability" | "anomaly";
  negativeSamplingRate: number;
  priorHitRate: number | null;
  alertThreshold: number;
  active: boolean;
}

export interface DemoAlertRow {
  externalId: string;
  occurredAt: string;
  receivedAt: string;
  amountMinor: number;
  currency: string;
  channel: string;
  merchantCategoryCode: string;
  merchantCountry: string;
  entityRef: string;
  modelName: string;
  modelVersion: string;
  score: number;
  reasonCodes: { code: string; contribution: number }[];
  belowTheLine: boolean;
  inclusionProbability: number | null;
}

export interface DemoOutcomeRow {
  externalId: string;
  outcome: "confirmed_fraud" | "legitimate" | "inconclusive";
  reason: string;
  reviewerEmail: string;
  claimedAt: string;
  closedAt: string;
  note?: string;
  secondReviewerEmail?: string;
  secondOutcome?: "confirmed_fraud" | "legitimate" | "inconclusive";
}

export interface DemoLabelRow {
  externalId: string;
  label: "fraud" | "genuine";
  source: "chargeback" | "customer_report";
  observedAt: string;
  reference: string;
}

export interface DemoScenario {
  modelVersions: DemoModelVersion[];
  alerts: DemoAlertRow[];
  outcomes: DemoOutcomeRow[];
  labels: DemoLabelRow[];
  /** Hidden truth, kept only so tests can check that outcomes follow it. */
  truth: Map<string, boolean>;
}

export const demoModelVersions: DemoModelVersion[] = [
  // Champion classifier trained with 2% of genuine transactions kept (β = 0.02).
  { modelName: "card-risk-gbm", version: "5.1.0", scoreKind: "probability", negativeSamplingRate: 0.02, priorHitRate: null, alertThreshold: 0.5, active: true },
  // Challenger scored on part of the same traffic.
  { modelName: "card-risk-gbm", version: "5.2.0-rc1", scoreKind: "probability", negativeSamplingRate: 0.02, priorHitRate: null, alertThreshold: 0.55, active: true },
  // Reconstruction error of an autoencoder over spending patterns: unbounded, not a probability.
  { modelName: "spend-pattern-ae", version: "2.0.3", scoreKind: "anomaly", negativeSamplingRate: 1, priorHitRate: 0.12, alertThreshold: 4, active: true },
];

interface Merchant {
  mcc: string;
  country: string;
  cnpShare: number;
  medianAmount: number;
  risk: number;
}

// Invented merchant profiles by category (ISO 18245 codes).
const merchants: Merchant[] = [
  { mcc: "5411", country: "NL", cnpShare: 0.05, medianAmount: 4_500, risk: 0.2 },
  { mcc: "5812", country: "NL", cnpShare: 0.1, medianAmount: 3_800, risk: 0.2 },
  { mcc: "5311", country: "BE", cnpShare: 0.3, medianAmount: 8_000, risk: 0.4 },
  { mcc: "5732", country: "DE", cnpShare: 0.8, medianAmount: 42_000, risk: 1.6 },
  { mcc: "5999", country: "FR", cnpShare: 0.7, medianAmount: 9_500, risk: 1.0 },
  { mcc: "4829", country: "GB", cnpShare: 0.9, medianAmount: 60_000, risk: 2.0 },
  { mcc: "7995", country: "MT", cnpShare: 1.0, medianAmount: 15_000, risk: 1.8 },
  { mcc: "4111", country: "NL", cnpShare: 0.2, medianAmount: 900, risk: 0.3 },
  { mcc: "5967", country: "US", cnpShare: 1.0, medianAmount: 3_000, risk: 1.4 },
  { mcc: "6011", country: "ES", cnpShare: 0, medianAmount: 20_000, risk: 1.1 },
];

const reasonCodeNames = ["velocity_1h", "new_device", "amount_vs_history", "merchant_risk", "geo_distance", "night_time", "card_testing_pattern", "mcc_first_use"];

const analysts = demoPeople.filter((person) => person.role === "analyst");
const supervisors = demoPeople.filter((person) => person.role === "supervisor");

// Reviewer habits: a miss rate on true fraud and a median handling time. One analyst clears
// too quickly, so the quality screens have something to show.
function reviewerHabit(email: string): { missRate: number; medianMinutes: number } {
  if (email.startsWith("dario.")) return { missRate: 0.28, medianMinutes: 2.2 };
  if (email.startsWith("sunniva.")) return { missRate: 0.05, medianMinutes: 8.5 };
  return { missRate: 0.1, medianMinutes: 5 };
}

const reasonsByOutcome = {
  confirmed_fraud: ["Cardholder denies the transaction", "Known compromised card", "Merchant pattern matches fraud"],
  legitimate: ["Cardholder confirmed the transaction", "Usual spending pattern", "Trusted merchant relationship"],
  inconclusive: ["Cardholder unreachable", "Insufficient information"],
} as const;

const logit = (p: number) => Math.log(p / (1 - p));
const sigmoid = (x: number) => 1 / (1 + Math.exp(-x));

/** The score a classifier trained with genuine examples kept at rate β gives to true probability q. */
function undersampledScore(q: number, beta: number): number {
  return q / (q + beta * (1 - q));
}

export interface GenerateScenarioOptions {
  now: Date;
  seed?: number;
  days?: number;
  alertsPerDay?: number;
  /** Alerts of the last hours that stay waiting: the live queue. */
  liveQueueHours?: number;
}

export function generateDemoScenario(options: GenerateScenarioOptions): DemoScenario {
  const random: Random = seededRandom(options.seed ?? DEMO_SEED);
  const days = options.days ?? 60;
  const alertsPerDay = options.alertsPerDay ?? 330;
  const liveQueueHours = options.liveQueueHours ?? 30;
  const now = options.now.getTime();
  const hour = 3_600_000;
  const start = now - days * 24 * hour;

  const cards = Array.from({ length: 4_000 }, (_, index) => `tok_${(0x5a17c0 + index * 7919).toString(16)}`);
  const compromised = new Set(cards.filter(() => random.chance(0.03)));

  const alerts: DemoAlertRow[] = [];
  const outcomes: DemoOutcomeRow[] = [];
  const labels: DemoLabelRow[] = [];
  const truth = new Map<string, boolean>();
  let sequence = 0;

  const total = days * alertsPerDay;
  for (let index = 0; index < total; index += 1) {
    const receivedAt = start + random.next() * (now - start);
    const occurredAt = receivedAt - random.int(5, 240) * 1000;
    const merchant = random.pick(merchants);
    const channel = merchant.mcc === "6011" ? "atm" : random.chance(merchant.cnpShare) ? "card_not_present" : "card_present";
    const entityRef = random.chance(0.15) ? random.pick([...compromised]) : random.pick(cards);
    // Hidden true probability that this flagged transaction is fraud.
    const base = -2.4 + 0.6 * merchant.risk + (channel === "card_not_present" ? 0.5 : 0) + (compromised.has(entityRef) ? 1.8 : 0) + 0.9 * random.normal();
    const q = sigmoid(base);
    const isFraud = random.chance(q);
    const amountMinor = Math.max(100, Math.round(random.logNormal(merchant.medianAmount * (isFraud ? 1.8 : 1), 0.9)));

    const ageDays = (now - receivedAt) / (24 * hour);
    const model = ageDays < 30 && random.chance(0.25) ? demoModelVersions[1] : random.chance(0.3) ? demoModelVersions[2] : demoModelVersions[0];
    let score: number;
    let belowTheLine = false;
    if (model.scoreKind === "probability") {
      const noisy = sigmoid(logit(undersampledScore(q, model.negativeSamplingRate)) + 0.5 * random.normal());
      score = Math.min(0.9999, Math.max(0.0001, noisy));
      // 3% of alerts are sent on purpose from below the alert threshold, with inclusion probability 0.05.
      if (random.chance(0.03)) {
        score = model.alertThreshold * (0.5 + 0.5 * random.next());
        belowTheLine = true;
      } else if (score < model.alertThreshold) {
        score = model.alertThreshold + (1 - model.alertThreshold) * random.next() * 0.4;
      }
    } else {
      // Reconstruction error rises with the hidden risk; over the last two weeks a feature
      // pipeline change shifts every score upward (the drift the Model health screen shows).
      const drift = ageDays < 14 ? 1.1 : 0;
      score = Math.max(model.alertThreshold, 3.6 + 3.2 * q + 0.9 * Math.abs(random.normal()) + drift);
    }
    score = Math.round(score * 1e6) / 1e6;

    sequence += 1;
    const externalId = `lk-${new Date(receivedAt).toISOString().slice(0, 10).replaceAll("-", "")}-${String(sequence).padStart(6, "0")}`;
    truth.set(externalId, isFraud);
    const reasonCodes = Array.from({ length: random.int(1, 3) }, () => ({
      code: random.pick(reasonCodeNames),
      contribution: Math.round(random.next() * 0.5 * 1000) / 1000,
    })).filter((code, position, all) => all.findIndex((other) => other.code === code.code) === position);

    alerts.push({
      externalId,
      occurredAt: new Date(occurredAt).toISOString(),
      receivedAt: new Date(receivedAt).toISOString(),
      amountMinor,
      currency: "EUR",
      channel,
      merchantCategoryCode: merchant.mcc,
      merchantCountry: merchant.country,
      entityRef,
      modelName: model.modelName,
      modelVersion: model.version,
      score,
      reasonCodes,
      belowTheLine,
      inclusionProbability: belowTheLine ? 0.05 : null,
    });

    if (now - receivedAt < liveQueueHours * hour) continue; // the live queue: still waiting

    const reviewer = random.pick(analysts);
    const habit = reviewerHabit(reviewer.email);
    const claimedAt = receivedAt + random.logNormal(3, 0.8) * hour;
    const closedAt = claimedAt + random.logNormal(habit.medianMinutes, 0.5) * 60_000;
    if (closedAt > now - hour) continue;
    let outcome: DemoOutcomeRow["outcome"];
    if (isFraud) outcome = random.chance(habit.missRate) ? "legitimate" : random.chance(0.06) ? "inconclusive" : "confirmed_fraud";
    else outcome = random.chance(0.03) ? "confirmed_fraud" : random.chance(0.05) ? "inconclusive" : "legitimate";

    const row: DemoOutcomeRow = {
      externalId,
      outcome,
      reason: random.pick(reasonsByOutcome[outcome]),
      reviewerEmail: reviewer.email,
      claimedAt: new Date(claimedAt).toISOString(),
      closedAt: new Date(closedAt).toISOString(),
    };
    // Four-eyes rule on large cleared amounts (default threshold 2,000.00 EUR of exposure).
    if (outcome === "legitimate" && amountMinor >= 150_000) {
      const second = random.chance(0.5) ? random.pick(supervisors) : random.pick(analysts.filter((person) => person.email !== reviewer.email));
      row.secondReviewerEmail = second.email;
      row.secondOutcome = isFraud && random.chance(0.6) ? "confirmed_fraud" : random.chance(0.06) ? "inconclusive" : "legitimate";
    }
    outcomes.push(row);

    // Late ground truth: most fraud eventually surfaces as a chargeback or a customer report,
    // 5 to 100 days after the transaction — only what would have arrived by now is included.
    if (isFraud && random.chance(0.75)) {
      const observedAt = occurredAt + random.int(5, 100) * 24 * hour;
      if (observedAt < now) {
        const source = random.chance(0.7) ? "chargeback" : "customer_report";
        labels.push({ externalId, label: "fraud", source, observedAt: new Date(observedAt).toISOString(), reference: `${source === "chargeback" ? "CB" : "CR"}-${sequence}` });
      }
    } else if (!isFraud && outcome === "confirmed_fraud" && random.chance(0.5)) {
      const observedAt = closedAt + random.int(2, 20) * 24 * hour;
      if (observedAt < now) labels.push({ externalId, label: "genuine", source: "customer_report", observedAt: new Date(observedAt).toISOString(), reference: `CR-${sequence}` });
    }
  }
  // A chargeback whose alert has not arrived yet: it is kept for matching, not dropped.
  labels.push({ externalId: "lk-pending-000001", label: "fraud", source: "chargeback", observedAt: new Date(now - 2 * hour).toISOString(), reference: "CB-PENDING-1" });

  return { modelVersions: demoModelVersions, alerts, outcomes, labels, truth };
}
