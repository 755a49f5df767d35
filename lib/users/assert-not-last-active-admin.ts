// The last active admin can be neither deactivated nor demoted: someone must always be able to
// manage users and API clients. The active admins' rows are locked first, so two admins removing
// each other at the same moment cannot both succeed.
import type { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";

export async function assertNotLastActiveAdmin(tx: Prisma.TransactionClient, options: { userId: string; change: "deactivate" | "demote" }): Promise<void> {
  const admins = await tx.$queryRaw<{ id: string }[]>`
    SELECT id::text FROM users WHERE role = 'admin' AND active ORDER BY id FOR UPDATE`;
  const isActiveAdmin = admins.some((admin) => admin.id === options.userId);
  if (isActiveAdmin && admins.length <= 1) {
    throw new AppError(
      "conflict",
      options.change === "deactivate"
        ? "This is the last active admin; make someone else an admin before deactivating this account."
        : "This is the last active admin; make someone else an admin before changing this role.",
    );
  }
}
