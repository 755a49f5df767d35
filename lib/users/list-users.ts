import type { DbOrTx } from "@/lib/db/client";
import type { UserSummary } from "@/lib/users/schemas";

/** Everyone, active people first, then by name; with their open sessions and last sign-in. */
export async function listUsers(db: DbOrTx): Promise<UserSummary[]> {
  const rows = await db.$queryRaw<{ id: string; email: string; displayName: string; role: string; active: boolean; createdAt: Date; openSessions: number; lastSignInAt: Date | null }[]>`
    SELECT u.id::text, u.email, u.display_name AS "displayName", u.role, u.active, u.created_at AS "createdAt",
           (SELECT count(*)::int FROM sessions s WHERE s.user_id = u.id AND s.ended_at IS NULL) AS "openSessions",
           (SELECT max(s.created_at) FROM sessions s WHERE s.user_id = u.id) AS "lastSignInAt"
      FROM users u
     ORDER BY u.active DESC, u.display_name, u.email`;
  return rows;
}
