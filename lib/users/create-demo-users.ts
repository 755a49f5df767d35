// The invented staff of the demo scenario (demo-data/people.ts), for local evaluation only.
// Safe to repeat: people whose email already exists are left as they are.
import type { DbOrTx } from "@/lib/db/client";
import { isRootClient } from "@/lib/db/in-transaction";
import { systemActor, type Actor } from "@/lib/auth/actor";
import { demoPeople } from "@/demo-data/people";
import { createUser } from "@/lib/users/create-user";

export interface CreateDemoUsersOptions {
  password: string;
  actor?: Actor;
}

export async function createDemoUsers(db: DbOrTx, options: CreateDemoUsersOptions): Promise<{ created: string[]; skipped: string[] }> {
  const actor = options.actor ?? systemActor("demo-loader");
  const existing = new Set((await db.user.findMany({ where: { email: { in: demoPeople.map((person) => person.email) } }, select: { email: true } })).map((user) => user.email));
  const missing = demoPeople.filter((person) => !existing.has(person.email));
  // A few at a time: hashing (scrypt) dominates and runs on Node's thread pool.
  const queue = [...missing];
  const worker = async () => {
    for (let person = queue.shift(); person; person = queue.shift()) {
      await createUser(db, { actor, email: person.email, displayName: person.displayName, role: person.role, password: options.password });
    }
  };
  await Promise.all(Array.from({ length: isRootClient(db) ? 4 : 1 }, worker));
  return { created: missing.map((person) => person.email), skipped: demoPeople.filter((person) => existing.has(person.email)).map((person) => person.email) };
}
