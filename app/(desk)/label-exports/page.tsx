import type { Metadata } from "next";
import { db } from "@/lib/db/client";
import { can } from "@/lib/auth/permissions";
import { requirePagePermission } from "@/lib/auth/current-user";
import { listLabelExports, type LabelExportListItem } from "@/lib/exports/list-label-exports";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { getSettings } from "@/lib/settings/get-settings";
import { NotAllowed } from "@/app/components/not-allowed";
import { LocalTime } from "@/app/components/local-time";
import { formatUtc } from "@/app/components/format";
import { LabelExportForm } from "@/app/(desk)/label-exports/label-export-form";
import { ExportProgressRefresher } from "@/app/(desk)/label-exports/export-progress-refresher";

export const metadata: Metadata = { title: "Label exports" };
export const dynamic = "force-dynamic";

const count = new Intl.NumberFormat("en");

function formatBytes(bytes: number | null): string {
  if (bytes === null) return "—";
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 ** 2) return `${(bytes / 1024).toFixed(1)} KiB`;
  if (bytes < 1024 ** 3) return `${(bytes / 1024 ** 2).toFixed(1)} MiB`;
  return `${(bytes / 1024 ** 3).toFixed(2)} GiB`;
}

function day(value: unknown): string {
  return typeof value === "string" ? value.slice(0, 10) : "—";
}

function Choices({ item }: { item: LabelExportListItem }) {
  const choices = item.choices;
  const versions = Array.isArray(choices.modelVersions) ? (choices.modelVersions as string[]).join(", ") : "—";
  const options = [
    choices.keepInconclusive ? "inconclusive kept" : null,
    choices.keepUnreviewed ? "unreviewed kept" : null,
    choices.includeBelowTheLine === false ? "no below-the-line" : null,
  ].filter(Boolean);
  return (
    <>
      <div>{versions}</div>
      <div className="text-xs text-ink-soft">
        occurred {day(choices.occurredFrom)} to {day(choices.occurredTo)} · as of {typeof choices.asOf === "string" ? formatUtc(new Date(choices.asOf)) : "—"} · maturity{" "}
        {String(choices.maturityDays ?? "—")} d{options.length > 0 ? ` · ${options.join(", ")}` : ""}
      </div>
    </>
  );
}

function Status({ item }: { item: LabelExportListItem }) {
  if (item.status === "running") {
    if (item.stalled) return <span className="text-overdue">stalled: no progress for over two minutes (the server may have restarted)</span>;
    if (item.expectedRowCount === null) return <span>running: counting rows…</span>;
    return (
      <span className="flex items-center gap-2">
        <span>running</span>
        {item.progress !== null && (
          <progress max={1} value={item.progress} aria-label={`Export ${item.id} progress`} className="h-2 w-24">
            {Math.round(item.progress * 100)}%
          </progress>
        )}
        {item.progress !== null && <span className="text-xs text-ink-soft">{Math.round(item.progress * 100)}%</span>}
      </span>
    );
  }
  if (item.status === "failed") return <span className="text-overdue">failed: {item.error}</span>;
  return <span>done</span>;
}

export default async function LabelExportsPage() {
  const access = await requirePagePermission("label_exports.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const now = new Date();
  const [exports, modelVersions, settings] = await Promise.all([listLabelExports(db(), { now }), listModelVersions(db()), getSettings(db())]);
  const canCreate = can(access.user.role, "label_exports.create");
  const running = exports.some((item) => item.status === "running" && !item.stalled);

  return (
    <section aria-labelledby="label-exports-heading" className="space-y-4">
      <div className="space-y-1">
        <h1 id="label-exports-heading" className="text-lg font-semibold">
          Label exports
        </h1>
        <p className="max-w-3xl text-sm text-ink-soft">
          Training labels for model owners: one row per alert with its score, the label (1 fraud, 0 genuine) and where it came from. A chargeback or customer report overrides the analyst&apos;s
          outcome, and the row says so. Reviewers appear only as pseudonymous ids. The README has the data dictionary; API clients with the <code className="font-mono">exports:read</code> scope get the
          same rows from <code className="font-mono">GET /api/v1/label-exports</code>.
        </p>
      </div>

      {canCreate && (
        <div className="panel p-4">
          <LabelExportForm
            modelVersions={modelVersions.map((version) => ({ id: version.id, label: `${version.modelName} ${version.version}`, active: version.active }))}
            defaults={{
              from: new Date(now.getTime() - 365 * 86_400_000).toISOString().slice(0, 10),
              asOf: now.toISOString().slice(0, 16),
              maturityDays: settings.metrics.labelMaturityDays,
            }}
          />
        </div>
      )}

      <ExportProgressRefresher running={running} />
      <div className="space-y-2">
        <h2 className="text-base font-semibold">Past exports</h2>
        {exports.length === 0 ? (
          <p className="text-sm text-ink-soft">No exports yet.</p>
        ) : (
          <div className="panel overflow-x-auto">
            <table className="data-table" aria-label="Label exports, newest first">
              <thead>
                <tr>
                  <th>Requested</th>
                  <th>By</th>
                  <th>Choices</th>
                  <th>Format</th>
                  <th>Status</th>
                  <th className="num">Rows</th>
                  <th className="num">Size</th>
                  <th>File</th>
                </tr>
              </thead>
              <tbody>
                {exports.map((item) => (
                  <tr key={item.id}>
                    <td className="whitespace-nowrap">
                      <LocalTime iso={item.requestedAt.toISOString()}>{formatUtc(item.requestedAt)}</LocalTime>
                    </td>
                    <td>{item.requestedBy}</td>
                    <td>
                      <Choices item={item} />
                    </td>
                    <td className="uppercase">{item.format}</td>
                    <td>
                      <Status item={item} />
                    </td>
                    <td className="num">
                      {count.format(item.rowCount)}
                      {item.status === "running" && item.expectedRowCount !== null && <span className="text-ink-soft"> of {count.format(item.expectedRowCount)}</span>}
                    </td>
                    <td className="num">{formatBytes(item.fileBytes)}</td>
                    <td>
                      {item.status === "done" && item.fileName ? (
                        <a href={`/api/v1/label-exports/${item.id}/file`} className="text-accent underline" download>
                          Download
                        </a>
                      ) : item.status === "done" ? (
                        <span className="text-xs text-ink-soft">streamed to the API client</span>
                      ) : (
                        "—"
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </div>
    </section>
  );
}
