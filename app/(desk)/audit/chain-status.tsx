// The chain's state at the top of the Audit trail, streamed in after the table: verifying walks
// the events, which takes a moment on a long log and should not hold the filters back. Between full
// walks (lib/audit/audit-chain-status.ts) it walks on from the last one and says so.
import Link from "next/link";
import { db } from "@/lib/db/client";
import { checkAuditChainForScreen } from "@/lib/audit/audit-chain-status";

const utcMinute = (instant: Date) => `${instant.toISOString().slice(0, 16).replace("T", " ")} UTC`;

/** `fullWalkHref`: this page with the request for a full walk. */
export async function ChainStatus({ full, fullWalkHref }: { full: boolean; fullWalkHref: string }) {
  const report = await checkAuditChainForScreen(db(), { now: new Date(), full });
  if (report.intact) {
    return (
      <div role="status" className="space-y-1">
        {report.resumedAfterId === null ? (
          <p className="text-sm">
            <span className="font-semibold text-fine">Chain verified:</span> {report.verified.toLocaleString("en")} events, each hash recomputed from the
            first event on.
          </p>
        ) : (
          <p className="text-sm">
            <span className="font-semibold text-fine">Chain verified:</span> {report.verified.toLocaleString("en")} events. Those up to event{" "}
            {report.resumedAfterId} were recomputed from the first event on at {utcMinute(report.fullWalkAt)};{" "}
            {report.walkedNow.toLocaleString("en")} {report.walkedNow === 1 ? "event" : "events"} after it, just now.{" "}
            <Link className="underline" href={fullWalkHref}>
              Recompute every event now
            </Link>
          </p>
        )}
        <p className="text-xs text-ink-soft">
          Head hash{report.headId ? ` (event ${report.headId})` : ""}:{" "}
          <code className="select-all break-all font-mono text-ink" aria-label="Head hash">
            {report.headHash}
          </code>
        </p>
      </div>
    );
  }
  const { brokenAt } = report;
  const around = brokenAt.id ?? brokenAt.afterId;
  return (
    <div role="alert" className="space-y-1 text-overdue">
      <p className="text-sm font-semibold">
        Chain broken{brokenAt.id ? ` at event ${brokenAt.id} (${brokenAt.action})` : ""}.
      </p>
      <p className="text-sm">
        {brokenAt.id ? "This event" : "The chain"}: {brokenAt.reason}. {report.verified.toLocaleString("en")} events before it verified.
      </p>
      {around && (
        <p className="text-xs">
          <Link className="underline" href={`/audit?before=${(BigInt(around) + BigInt(6)).toString()}&limit=10`}>
            Show the events around it
          </Link>
          . Treat the log after this point as untrusted, keep the database as it is, and compare with the head hashes kept outside it.
        </p>
      )}
    </div>
  );
}
