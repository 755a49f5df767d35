// npm run audit:verify — walk the audit log's hash chain and print "verified N events, head hash H",
// or the first broken link and exit 1. Run it daily and copy the head hash into a system that this
// database's administrators cannot rewrite (see the Audit trail screen). Pass yesterday's copy back
// with --anchor <hash> (comma-separated for several) to prove the log still contains it unchanged.
import { createDatabaseHandles } from "@/lib/db/client";
import { openDefaultDatabase } from "@/lib/db/default-database";
import { describeAuditChainReport, verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { AppError } from "@/lib/errors";
import { parseArguments, runCommand } from "@/lib/cli/run-command";

await runCommand(async () => {
  const { options } = parseArguments(process.argv.slice(2));
  if (options.help) {
    console.log("usage: npm run audit:verify [-- --anchor <head hash>[,<head hash>…]] [--json]");
    return 0;
  }
  const anchors = typeof options.anchor === "string" ? options.anchor.split(",").map((hash) => hash.trim()).filter(Boolean) : [];
  const malformed = anchors.find((hash) => !/^[0-9a-fA-F]{64}$/.test(hash));
  if (malformed) throw new AppError("invalid_input", `--anchor: "${malformed}" is not a SHA-256 hash (64 hexadecimal characters)`);

  const database = await openDefaultDatabase();
  const { pool, prisma } = createDatabaseHandles(database.url, 2);
  try {
    const report = await verifyAuditChain(prisma, { anchors });
    if (options.json) console.log(JSON.stringify({ checkedAt: new Date().toISOString(), ...report }));
    else if (report.intact) {
      console.log(describeAuditChainReport(report));
      for (const anchor of report.anchors) console.log(`anchor ${anchor.hash} found at event ${anchor.foundAtId}`);
    } else console.error(describeAuditChainReport(report));
    return report.intact ? 0 : 1;
  } catch (error) {
    if ((error as { code?: string }).code === "42P01" || /audit_events.*does not exist/.test(String((error as Error).message))) {
      throw new AppError("unavailable", "This database has no audit log yet: run `npm run db:migrate` first.");
    }
    throw error;
  } finally {
    await prisma.$disconnect();
    await pool.end();
    await database.close();
  }
});
