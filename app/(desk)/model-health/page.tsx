import type { Metadata } from "next";
import Link from "next/link";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { isAppError, type FieldIssue } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { formWindowInput, parseModelVersionMetricsQuery } from "@/lib/feedback/parse-metrics-query";
import type { ModelVersionMetrics, ModelVersionMetricsAnswer, ModelVersionMetricsQuery, WindowQuery } from "@/lib/feedback/schemas";
import { NotAllowed } from "@/app/components/not-allowed";
import { formValues, MetricsWindowForm, WindowSummary } from "@/app/components/metrics-window-form";
import { formatCount, formatDecimal, formatInterval, formatPercent } from "@/app/components/metric-format";
import { ModelVersionPanel } from "@/app/(desk)/model-health/model-version-panel";

export const metadata: Metadata = { title: "Model health" };
export const dynamic = "force-dynamic";

type SearchParams = Record<string, string | string[] | undefined>;

const first = (value: string | string[] | undefined) => (Array.isArray(value) ? value[0] : value) ?? "";

/** One row of the side-by-side table: the same number for each version shown. */
function CompareRow({ label, values, hint }: { label: string; values: string[]; hint?: string }) {
  return (
    <tr>
      <th scope="row" className="font-normal text-ink">
        {label}
        {hint ? <span className="block text-2xs text-ink-soft">{hint}</span> : null}
      </th>
      {values.map((value, index) => (
        <td key={index} className="num">
          {value}
        </td>
      ))}
    </tr>
  );
}

function rateCell(rate: { value: number | null; lower: number; upper: number; trials: number }): string {
  return rate.value === null ? "—" : `${formatPercent(rate.value)} (${formatInterval(rate)})`;
}

export default async function ModelHealthPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("model_health.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const raw = await searchParams;
  const now = new Date();
  const [settings, versions] = await Promise.all([getSettings(db()), listModelVersions(db())]);

  // Champion and challenger travel in the URL. By default: two active versions of the same model,
  // the older as champion and the newer as challenger; otherwise the newest active version alone.
  const known = new Set(versions.map((version) => version.id));
  const newestActive = versions.filter((version) => version.active).sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime());
  const pair = newestActive.flatMap((newer) => newestActive.filter((older) => older.modelName === newer.modelName && older.id !== newer.id).map((older) => [older, newer]))[0];
  const defaults = { champion: pair?.[0].id ?? newestActive[0]?.id ?? "", challenger: pair?.[1].id ?? "" };
  const pick = (name: "champion" | "challenger") => (raw[name] === undefined ? defaults[name] : known.has(first(raw[name])) ? first(raw[name]) : "");
  const champion = pick("champion");
  const challenger = pick("challenger");
  const shown = [champion, challenger].filter((id, index, all) => id !== "" && all.indexOf(id) === index);

  let query: (WindowQuery & ModelVersionMetricsQuery) | null = null;
  let issues: FieldIssue[] = [];
  let answer: ModelVersionMetricsAnswer | null = null;
  try {
    query = parseModelVersionMetricsQuery({ ...formWindowInput(raw), modelVersionId: shown });
    answer = shown.length > 0 ? await getModelVersionMetrics(db(), { query, now }) : null;
  } catch (error) {
    if (!isAppError(error)) throw error;
    issues = error.issues;
  }

  const keep: [string, string][] = [
    ["champion", champion],
    ["challenger", challenger],
  ];
  const panels: { metrics: ModelVersionMetrics; role: "champion" | "challenger" | null }[] =
    answer?.modelVersions.map((metrics) => ({
      metrics,
      role: shown.length < 2 ? null : metrics.modelVersion.id === champion ? "champion" : "challenger",
    })) ?? [];
  const versionLabel = (id: string) => {
    const version = versions.find((candidate) => candidate.id === id);
    return version ? `${version.modelName} ${version.version}${version.active ? "" : " (retired)"}` : id;
  };
  const apiQuery = new URLSearchParams([
    ...Object.entries(formWindowInput(raw)).flatMap(([key, value]) =>
      ["window", "date", "from", "to", "bucket", "driftCurrentDays", "driftReferenceDays"].includes(key) && first(value) !== "" ? [[key, first(value)] as [string, string]] : [],
    ),
    ...shown.map((id) => ["modelVersionId", id] as [string, string]),
  ]);

  return (
    <section aria-labelledby="model-health-heading" className="space-y-4">
      <div className="space-y-1">
        <h1 id="model-health-heading" className="text-lg font-semibold">
          Model health
        </h1>
        <p className="max-w-3xl text-sm text-ink-soft">
          How each model version performs on what reviews and late labels showed: alerts in a window by arrival day, every rate with its 95%
          Wilson interval and the counts behind it. Put a champion and a challenger side by side to compare them on the same days.
        </p>
      </div>

      <MetricsWindowForm
        action="/model-health"
        label="Window and model versions"
        values={formValues(raw)}
        issues={issues}
        now={now}
        labelMaturityDays={settings.metrics.labelMaturityDays}
        keep={keep}
      >
        <label className="flex flex-col gap-1 text-xs font-semibold text-ink-soft" htmlFor="mh-champion">
          Champion
          <select id="mh-champion" name="champion" defaultValue={champion} className="field">
            {versions.map((version) => (
              <option key={version.id} value={version.id}>
                {versionLabel(version.id)}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-xs font-semibold text-ink-soft" htmlFor="mh-challenger">
          Challenger
          <select id="mh-challenger" name="challenger" defaultValue={challenger} className="field">
            <option value="">None</option>
            {versions.map((version) => (
              <option key={version.id} value={version.id}>
                {versionLabel(version.id)}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-xs font-semibold text-ink-soft" htmlFor="mh-drift-current">
          Drift: last days
          <input id="mh-drift-current" type="number" min={1} max={365} name="driftCurrentDays" defaultValue={first(raw.driftCurrentDays) || "14"} className="field w-20" />
        </label>
        <label className="flex flex-col gap-1 text-xs font-semibold text-ink-soft" htmlFor="mh-drift-reference">
          against the days before
          <input id="mh-drift-reference" type="number" min={1} max={365} name="driftReferenceDays" defaultValue={first(raw.driftReferenceDays) || "28"} className="field w-20" />
        </label>
      </MetricsWindowForm>
      {versions.length === 0 ? (
        <p className="text-sm text-ink-soft">No model versions are registered yet. An admin registers them in Settings.</p>
      ) : null}

      {answer ? (
        <>
          <WindowSummary window={answer.window} what="Alerts that arrived" />
          <div className="panel overflow-x-auto">
            <table className="data-table" aria-label="Model versions side by side">
              <thead>
                <tr>
                  <th scope="col">Over the window</th>
                  {panels.map((panel) => (
                    <th key={panel.metrics.modelVersion.id} scope="col" className="num">
                      {panel.role ? `${panel.role}: ` : ""}
                      {versionLabel(panel.metrics.modelVersion.id)}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                <CompareRow label="Alerts received / closed" values={panels.map(({ metrics }) => `${formatCount(metrics.received)} / ${formatCount(metrics.closed)}`)} />
                <CompareRow label="Realized precision" hint="95% Wilson interval" values={panels.map(({ metrics }) => rateCell(metrics.realizedPrecision))} />
                <CompareRow label={`Precision at k = ${settings.metrics.dailyCapacity}`} hint="all days pooled" values={panels.map(({ metrics }) => rateCell(metrics.precisionAtK.overall))} />
                <CompareRow label="Brier score" values={panels.map(({ metrics }) => formatDecimal(metrics.calibration.brierScore))} />
                <CompareRow label="ECE" hint="binned, Naeini et al. 2015" values={panels.map(({ metrics }) => formatDecimal(metrics.calibration.expectedCalibrationError))} />
                <CompareRow label="ROC AUC / average precision" hint="measured on reviewed alerts only" values={panels.map(({ metrics }) => `${formatDecimal(metrics.discrimination.rocAuc)} / ${formatDecimal(metrics.discrimination.averagePrecision)}`)} />
                <CompareRow label="PSI of scores" hint="0.1 watch, 0.25 act (common practice)" values={panels.map(({ metrics }) => (metrics.drift.psi === null ? "—" : `${metrics.drift.psi.toFixed(3)} (${metrics.drift.level})`))} />
              </tbody>
            </table>
          </div>
          <div className={`grid gap-4 ${panels.length > 1 ? "lg:grid-cols-2" : ""}`}>
            {panels.map((panel) => (
              <ModelVersionPanel key={panel.metrics.modelVersion.id} metrics={panel.metrics} role={panel.role} window={answer.window} />
            ))}
          </div>
          <p className="text-xs text-ink-soft">
            The same numbers as JSON:{" "}
            <Link href={`/api/v1/metrics/model-versions?${apiQuery.toString()}`} className="font-mono text-accent underline">
              GET /api/v1/metrics/model-versions?{apiQuery.toString()}
            </Link>
          </p>
        </>
      ) : null}
    </section>
  );
}
