import type { Metadata } from "next";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { can } from "@/lib/auth/permissions";
import { getSettings } from "@/lib/settings/get-settings";
import { majorUnitsText, OUTCOME_KINDS } from "@/lib/settings/settings-forms";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatUtc } from "@/app/components/format";
import { CalibrationSettingsForm, CostSettingsForm, QueueSettingsForm, RefitButton } from "@/app/(desk)/settings/settings-forms";
import { ModelVersionForm } from "@/app/(desk)/settings/model-version-form";

export const metadata: Metadata = { title: "Settings" };
export const dynamic = "force-dynamic";

export default async function SettingsPage() {
  const access = await requirePagePermission("settings.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const role = access.user.role;
  const [settings, modelVersions] = await Promise.all([getSettings(db()), listModelVersions(db())]);
  const { queue, costs, calibration } = settings;
  const currency = costs.homeCurrency;
  const channels = settings.ingest.channels;
  const mayRefit = can(role, "calibration.refit");

  return (
    <section aria-labelledby="settings-heading" className="space-y-4">
      <div>
        <h1 id="settings-heading" className="text-lg font-semibold">
          Settings
        </h1>
        <p className="text-sm text-ink-soft">
          Saving queue or cost settings re-derives every waiting alert&apos;s expected loss, due time and priority at once; the next claim follows the new
          order. Every change is recorded in the audit trail with its before and after.
        </p>
      </div>

      <QueueSettingsForm
        readOnly={!can(role, "settings.queue.edit")}
        currency={currency}
        channels={channels}
        saved={{
          orderMode: queue.orderMode,
          bands: [...queue.slaBands]
            .sort((a, b) => a.minExpectedLossMinor - b.minExpectedLossMinor)
            .map((band) => ({ from: majorUnitsText(band.minExpectedLossMinor, currency), hours: String(band.slaHours) })),
          expectedHandlingMinutes: String(queue.expectedHandlingMinutes),
          handlingByChannel: Object.fromEntries(Object.entries(queue.handlingMinutesByChannel).map(([channel, minutes]) => [channel, String(minutes)])),
          claimLeaseMinutes: String(queue.claimLeaseMinutes),
          maxHeldPerAnalyst: String(queue.maxHeldPerAnalyst),
          fourEyesExposure: majorUnitsText(queue.fourEyesExposureMinor, currency),
          reasons: Object.fromEntries(OUTCOME_KINDS.map((outcome) => [outcome, queue.outcomeReasons[outcome].join("\n")])) as Record<(typeof OUTCOME_KINDS)[number], string>,
        }}
      />

      <CostSettingsForm
        readOnly={!can(role, "settings.costs.edit")}
        currency={currency}
        channels={channels}
        saved={{
          recoveryByChannel: Object.fromEntries(channels.map((channel) => [channel, String(Math.round((costs.recoveryRateByChannel[channel] ?? 0) * 10_000) / 100)])),
          fixedCostPerFraud: majorUnitsText(costs.fixedCostPerFraudMinor, currency),
          reviewCostPerMinute: majorUnitsText(costs.reviewCostPerMinuteMinor, currency),
        }}
      />

      <CalibrationSettingsForm
        readOnly={!mayRefit}
        saved={{
          minLabels: String(calibration.minLabels),
          minPerClass: String(calibration.minPerClass),
          refitAfterNewOutcomes: String(calibration.refitAfterNewOutcomes),
        }}
      />

      {/* Model versions: the registry's own management (create, edit β, prior, threshold) plugs in here. */}
      <section aria-labelledby="model-versions-heading" className="panel space-y-3 p-4">
        <h2 id="model-versions-heading" className="text-base font-semibold">
          Model versions
        </h2>
        <p className="text-sm text-ink-soft">
          Each version&apos;s alerts get their probability from its latest calibration map, fitted on its own reviewed outcomes. A refit happens
          automatically after {calibration.refitAfterNewOutcomes} new outcomes{mayRefit ? "; refit by hand after a change you know of" : ""}.
        </p>
        {modelVersions.length === 0 ? (
          <p className="text-sm text-ink-soft">No model version is registered yet.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="data-table" aria-label="Model versions and their calibration">
              <thead>
                <tr>
                  <th>Model</th>
                  <th>Version</th>
                  <th>Score</th>
                  <th className="num">β (negatives kept)</th>
                  <th className="num">Prior hit rate</th>
                  <th>Status</th>
                  <th>Calibrated</th>
                  <th className="num">Outcomes in map</th>
                  {mayRefit && <th>Calibration</th>}
                </tr>
              </thead>
              <tbody>
                {modelVersions.map((version) => (
                  <tr key={version.id}>
                    <td>{version.modelName}</td>
                    <td className="font-mono text-xs">{version.version}</td>
                    <td>{version.scoreKind}</td>
                    <td className="num">{version.negativeSamplingRate}</td>
                    <td className="num">{version.priorHitRate ?? "—"}</td>
                    <td>{version.active ? "active" : "retired"}</td>
                    <td>{version.calibratedAt ? formatUtc(version.calibratedAt) : "not yet (fallback probability)"}</td>
                    <td className="num">{version.calibrationLabelCount ?? "—"}</td>
                    {mayRefit && (
                      <td>
                        <RefitButton modelVersionId={version.id} label={`${version.modelName} ${version.version}`} />
                      </td>
                    )}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        {can(role, "model_versions.manage") && <ModelVersionForm />}
      </section>
    </section>
  );
}
