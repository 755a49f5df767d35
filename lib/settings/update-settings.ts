import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { settingsSchemas, type Settings, type SettingsKey } from "@/lib/settings/schemas";

export interface UpdateSettingsOptions<K extends SettingsKey> {
  actor: AuditActor & { id: string | null };
  key: K;
  value: unknown;
  context?: AuditContext;
}

/** Validates and saves one settings group with its audit event; takes effect at once. */
export async function updateSettings<K extends SettingsKey>(db: DbOrTx, options: UpdateSettingsOptions<K>): Promise<Settings[K]> {
  const parsed = settingsSchemas[options.key].safeParse(options.value);
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      `Settings "${options.key}" are not valid`,
      parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
    );
  }
  const run = async (tx: Prisma.TransactionClient) => {
    const before = (await getSettings(tx))[options.key];
    await tx.setting.upsert({
      where: { key: options.key },
      create: { key: options.key, value: parsed.data as Prisma.InputJsonValue, updatedById: options.actor.type === "user" ? options.actor.id : null },
      update: { value: parsed.data as Prisma.InputJsonValue, updatedAt: new Date(), updatedById: options.actor.type === "user" ? options.actor.id : null },
    });
    await recordAuditEvent(tx, {
      actor: options.actor,
      event: { action: "settings.changed", payload: { key: options.key, before, after: parsed.data } },
      subject: { type: "settings", id: options.key },
      context: options.context,
    });
    return parsed.data as Settings[K];
  };
  return inTransaction(db, run);
}
