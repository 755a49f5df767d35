// Loads the invented demo scenario through the same lib functions that the API, the upload
// screen and the command line use, so the demo exercises the real ingest path.
// Loads only into an empty database; a second run adds nothing. The anchor time is saved first,
// so an interrupted load resumes with the same rows (ingest is idempotent).
import type { Prisma } from "@/lib/generated/prisma/client";
import { createDatabaseHandles } from "@/lib/db/client";
import { systemActor } from "@/lib/auth/actor";
import { DEMO_PASSWORD } from "@/demo-data/people";
import { generateDemoScenario } from "@/demo-data/generate-scenario";
import { createDemoUsers } from "@/lib/users/create-demo-users";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { refitCalibration } from "@/lib/calibration/refit-calibration";

const MARKER_KEY = "demo_scenario";
const CHUNK = 5_000;

interface Marker {
  anchor: string;
  completedAt: string | null;
}

export interface LoadDemoOptions {
  databaseUrl: string;
  log: (line: string) => void;
  now?: Date;
}

function chunks<T>(rows: T[], size: number): T[][] {
  const out: T[][] = [];
  for (let index = 0; index < rows.length; index += size) out.push(rows.slice(index, index + size));
  return out;
}

export async function loadDemoScenarioIfEmpty(options: LoadDemoOptions): Promise<void> {
  const { pool, prisma } = createDatabaseHandles(options.databaseUrl, 4);
  try {
    const markerRow = await prisma.setting.findUnique({ where: { key: MARKER_KEY } });
    const marker = markerRow?.value as Marker | undefined;
    if (marker?.completedAt) {
      options.log("Demo data: already loaded earlier; nothing added.");
      return;
    }
    if (!marker) {
      const [users, alerts] = await Promise.all([prisma.user.count(), prisma.alert.count()]);
      if (users > 0 || alerts > 0) {
        options.log("Demo data: this database already has users or alerts, so the demo scenario was not loaded.");
        return;
      }
    }
    const anchor = marker ? new Date(marker.anchor) : (options.now ?? new Date());
    await prisma.setting.upsert({
      where: { key: MARKER_KEY },
      create: { key: MARKER_KEY, value: { anchor: anchor.toISOString(), completedAt: null } satisfies Marker as unknown as Prisma.InputJsonValue },
      update: {},
    });

    const started = Date.now();
    const actor = systemActor("demo-loader");
    const scenario = generateDemoScenario({ now: anchor });
    options.log(`Demo data: loading ${scenario.alerts.length.toLocaleString("en")} alerts of an invented card issuer…`);

    await createDemoUsers(prisma, { password: DEMO_PASSWORD });
    for (const modelVersion of scenario.modelVersions) {
      await saveModelVersion(prisma, { actor, input: modelVersion });
    }
    let done = 0;
    for (const rows of chunks(scenario.alerts, CHUNK)) {
      await ingestAlerts(prisma, { actor, rows, channel: "demo", allowReceivedAt: true, now: anchor });
      done += rows.length;
      options.log(`  alerts ${done.toLocaleString("en")}/${scenario.alerts.length.toLocaleString("en")}`);
    }
    done = 0;
    for (const rows of chunks(scenario.outcomes, CHUNK)) {
      await ingestOutcomes(prisma, { actor, rows, channel: "demo", now: anchor });
      done += rows.length;
      options.log(`  outcomes ${done.toLocaleString("en")}/${scenario.outcomes.length.toLocaleString("en")}`);
    }
    await ingestLabels(prisma, { actor, rows: scenario.labels, channel: "demo", now: anchor });
    options.log(`  labels ${scenario.labels.length.toLocaleString("en")}`);

    const versions = await prisma.modelVersion.findMany({ select: { id: true, modelName: true, version: true } });
    for (const version of versions) {
      const result = await refitCalibration(prisma, { actor, modelVersionId: version.id, trigger: "on_demand", now: anchor }).catch((error: Error) => error);
      options.log(`  calibration ${version.modelName} ${version.version}: ${result instanceof Error ? `not fitted (${result.message})` : "fitted"}`);
    }

    await prisma.setting.update({
      where: { key: MARKER_KEY },
      data: { value: { anchor: anchor.toISOString(), completedAt: new Date().toISOString() } satisfies Marker as unknown as Prisma.InputJsonValue },
    });
    options.log(`Demo data: loaded in ${((Date.now() - started) / 1000).toFixed(1)} s.`);
  } finally {
    await prisma.$disconnect();
    await pool.end();
  }
}
