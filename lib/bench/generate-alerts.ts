// Deterministic alert rows for the benchmark, shaped like the ingest contract (demo-data DemoAlertRow).
import { seededRandom } from "@/demo-data/random";
import type { DemoAlertRow } from "@/demo-data/generate-scenario";

export const BENCH_MODEL = { modelName: "bench-gbm", version: "1.0.0", scoreKind: "probability", negativeSamplingRate: 0.02, priorHitRate: null, alertThreshold: 0.5, active: true } as const;

const CHANNELS = ["card_present", "card_not_present", "atm"] as const;
const COUNTRIES = ["DE", "FR", "NL", "GB", "US", "ES", "IT", "PL"] as const;
const MCCS = ["5411", "5812", "5999", "4829", "5732", "7995", "6011", "5311"] as const;
const REASONS = ["velocity", "new_device", "geo_mismatch", "amount_spike", "mcc_risk"] as const;

/** `count` alerts received over the `days` days before `now`, the same for the same seed. */
export function generateBenchAlerts(count: number, now: Date, options: { seed?: number; days?: number } = {}): DemoAlertRow[] {
  const random = seededRandom(options.seed ?? 20261202);
  const spanMs = (options.days ?? 30) * 86_400_000;
  const rows: DemoAlertRow[] = new Array(count);
  for (let index = 0; index < count; index += 1) {
    const receivedAt = new Date(now.getTime() - spanMs + Math.floor((index / count) * spanMs));
    const occurredAt = new Date(receivedAt.getTime() - random.int(1, 600) * 1000);
    const belowTheLine = random.chance(0.03);
    const score = belowTheLine ? random.next() * 0.5 : 0.5 + random.next() * 0.5;
    rows[index] = {
      externalId: `bench-${String(index).padStart(8, "0")}`,
      occurredAt: occurredAt.toISOString(),
      receivedAt: receivedAt.toISOString(),
      amountMinor: Math.round(random.logNormal(4_000, 1.2)),
      currency: "EUR",
      channel: random.pick(CHANNELS),
      merchantCategoryCode: random.pick(MCCS),
      merchantCountry: random.pick(COUNTRIES),
      entityRef: `tok_${random.int(1, Math.max(1, Math.floor(count / 4)))}`,
      modelName: BENCH_MODEL.modelName,
      modelVersion: BENCH_MODEL.version,
      score: Number(score.toFixed(4)),
      reasonCodes: [
        { code: random.pick(REASONS), contribution: Number((random.next() * 0.4).toFixed(3)) },
        { code: random.pick(REASONS), contribution: Number((random.next() * 0.2).toFixed(3)) },
      ],
      belowTheLine,
      inclusionProbability: belowTheLine ? 0.05 : null,
    };
  }
  return rows;
}
