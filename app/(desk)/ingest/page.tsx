import type { Metadata } from "next";
import Link from "next/link";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { can } from "@/lib/auth/permissions";
import { getSettings } from "@/lib/settings/get-settings";
import { INGEST_KINDS, type IngestKind } from "@/lib/ingest/ingest-batch";
import { listIngestBatches } from "@/lib/ingest/list-ingest-batches";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatUtc } from "@/app/components/format";
import { UploadForm } from "@/app/(desk)/ingest/upload-form";

export const metadata: Metadata = { title: "Ingest log" };
export const dynamic = "force-dynamic";

const PAGE_SIZE = 50;
const channelNames = { api: "API", upload: "upload", command_line: "command line", demo: "demo" } as const;

function pageHref(page: number, kind: IngestKind | null): string {
  const params = new URLSearchParams();
  if (kind) params.set("kind", kind);
  if (page > 1) params.set("page", String(page));
  const query = params.toString();
  return query ? `/ingest?${query}` : "/ingest";
}

export default async function IngestLogPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const access = await requirePagePermission("ingest.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const query = await searchParams;
  const kind = INGEST_KINDS.find((candidate) => candidate === query.kind) ?? null;
  const page = Math.max(1, Math.floor(Number(query.page) || 1));
  const [{ batches, total }, settings] = await Promise.all([
    listIngestBatches(db(), { limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE, kind: kind ?? undefined }),
    getSettings(db()),
  ]);
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));
  const mayUpload = can(access.user.role, "ingest.upload");

  return (
    <section aria-labelledby="ingest-heading" className="space-y-4">
      <div>
        <h1 id="ingest-heading" className="text-lg font-semibold">
          Ingest log
        </h1>
        <p className="text-sm text-ink-soft">
          Every batch of alerts, labels and historical outcomes that reached Triage Desk, whether from the scoring service (API), an upload on this page, the
          command line (<code className="font-mono text-xs">npm run ingest -- &lt;file&gt;</code>) or the demo. Rejected and conflicting rows can be downloaded
          with their reasons; card-number-like values appear only masked.
        </p>
      </div>

      {mayUpload && (
        <div className="panel p-4">
          <UploadForm maxRowsPerRequest={settings.ingest.maxRowsPerRequest} />
        </div>
      )}

      <nav aria-label="Batch kind" className="flex gap-3 text-sm">
        {[null, ...INGEST_KINDS].map((candidate) => (
          <Link
            key={candidate ?? "all"}
            href={pageHref(1, candidate)}
            aria-current={candidate === kind ? "page" : undefined}
            className={candidate === kind ? "font-semibold text-ink" : "text-accent underline"}
          >
            {candidate ?? "all kinds"}
          </Link>
        ))}
      </nav>

      <div className="panel overflow-x-auto">
        <table className="data-table" aria-label="Ingest batches, newest first">
          <thead>
            <tr>
              <th>Received</th>
              <th>Kind</th>
              <th>Channel</th>
              <th>Sender</th>
              <th>File</th>
              <th className="num">Rows</th>
              <th className="num">Accepted</th>
              <th className="num">Duplicate</th>
              <th className="num">Conflict</th>
              <th className="num">Rejected</th>
              <th>Reasons</th>
            </tr>
          </thead>
          <tbody>
            {batches.length === 0 && (
              <tr>
                <td colSpan={11} className="text-ink-soft">
                  No batches yet.
                </td>
              </tr>
            )}
            {batches.map((batch) => (
              <tr key={batch.id}>
                <td className="whitespace-nowrap">{formatUtc(batch.receivedAt)}</td>
                <td>{batch.kind}</td>
                <td>{channelNames[batch.channel]}</td>
                <td className="font-mono text-xs">{batch.sender}</td>
                <td className="max-w-48 truncate font-mono text-xs" title={batch.fileName ?? undefined}>
                  {batch.fileName ?? "—"}
                </td>
                <td className="num">{batch.rowCount.toLocaleString("en")}</td>
                <td className="num">{batch.accepted.toLocaleString("en")}</td>
                <td className="num">{batch.duplicate.toLocaleString("en")}</td>
                <td className={`num ${batch.conflict > 0 ? "font-semibold text-attention" : ""}`}>{batch.conflict.toLocaleString("en")}</td>
                <td className={`num ${batch.rejected > 0 ? "font-semibold text-overdue" : ""}`}>{batch.rejected.toLocaleString("en")}</td>
                <td>
                  {batch.problemCount > 0 ? (
                    <a href={`/api/v1/ingest-batches/${batch.id}/rejected`} download className="text-accent underline">
                      CSV ({batch.problemCount.toLocaleString("en")})
                    </a>
                  ) : (
                    <span className="text-ink-faint">none</span>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>

      {pages > 1 && (
        <nav aria-label="Pages" className="flex items-center gap-3 text-sm">
          {page > 1 && (
            <Link href={pageHref(page - 1, kind)} className="btn">
              Newer
            </Link>
          )}
          <span className="text-ink-soft">
            Page {page} of {pages} ({total.toLocaleString("en")} batches)
          </span>
          {page < pages && (
            <Link href={pageHref(page + 1, kind)} className="btn">
              Older
            </Link>
          )}
        </nav>
      )}
    </section>
  );
}
