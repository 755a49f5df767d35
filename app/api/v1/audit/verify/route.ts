// GET /api/v1/audit/verify — walk the audit log's hash chain: the count verified and the head hash, or the first broken link; ?anchor=<hash> (repeatable) checks head hashes kept outside the database.
import { db } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { apiRoute } from "@/lib/http/api-route";
import { describeAuditChainReport, verifyAuditChain } from "@/lib/audit/verify-audit-chain";

// A broken chain is a finding, not a failed request: the answer is 200 with `intact: false`.
export const GET = apiRoute("GET /api/v1/audit/verify", async (request, { now }) => {
  const anchors = request.nextUrl.searchParams.getAll("anchor").flatMap((value) => value.split(",")).map((hash) => hash.trim()).filter(Boolean);
  const malformed = anchors.findIndex((hash) => !/^[0-9a-fA-F]{64}$/.test(hash));
  if (malformed >= 0) {
    throw new AppError("invalid_input", "anchor: a head hash is 64 hexadecimal characters", [{ path: "anchor", message: `"${anchors[malformed].slice(0, 80)}" is not a SHA-256 hash` }]);
  }
  if (anchors.length > 100) throw new AppError("invalid_input", "anchor: at most 100 head hashes per request", [{ path: "anchor", message: "at most 100" }]);
  const report = await verifyAuditChain(db(), { anchors });
  return { checkedAt: now.toISOString(), summary: describeAuditChainReport(report), ...report };
});
