import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { emailSchema } from "@/lib/auth/schemas";

export async function getUserByEmailOrThrow(db: DbOrTx, options: { email: string }): Promise<{ id: string; email: string; displayName: string; role: string; active: boolean }> {
  const email = emailSchema.safeParse(options.email);
  if (!email.success) throw new AppError("invalid_input", `"${options.email}" is not an email address.`);
  const user = await db.user.findUnique({ where: { email: email.data }, select: { id: true, email: true, displayName: true, role: true, active: true } });
  if (!user) throw new AppError("not_found", `No user has the email ${email.data}.`);
  return user;
}
