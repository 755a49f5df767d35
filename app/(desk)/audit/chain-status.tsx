// The chain's state at the top of the Audit trail, streamed in after the table: verifying walks
// every event, which takes a moment on a long log and should not hold the filters back.
import Link from "next/link";
import { db } from "@/lib/db/client";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";

export async function ChainStatus() {
  const report = await verifyAuditChain(db());
  if (report.intact) {
    return (
      <div role="status" className="space-y-1">
        <p className="text-sm">
          <span className="font-semibold text-fine">Chain verified:</span> {report.verified.toLocaleString("en")} events, each hash recomputed from the
          first event on.
        </p>
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
