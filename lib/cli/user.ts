// npm run user -- <command>: manage people from a shell, audited as `cli:<os user>`.
//   create --email <e> --role <r> [--name <n>]   password from standard input
//   list
//   deactivate <email>
//   reactivate <email>
//   set-role <email> <role>
//   set-password <email>                         password from standard input; ends their sessions
import { AppError } from "@/lib/errors";
import { runCommand, parseArguments } from "@/lib/cli/run-command";
import { cliActor, formatTable, readPasswordFromStdin, withDefaultDatabase } from "@/lib/cli/cli-support";
import { roles } from "@/lib/auth/permissions";
import { createUser } from "@/lib/users/create-user";
import { listUsers } from "@/lib/users/list-users";
import { deactivateUser } from "@/lib/users/deactivate-user";
import { reactivateUser } from "@/lib/users/reactivate-user";
import { changeRole } from "@/lib/users/change-role";
import { setUserPassword } from "@/lib/users/set-user-password";
import { getUserByEmailOrThrow } from "@/lib/users/get-user-by-email-or-throw";

const usage = `Usage:
  npm run user -- create --email <email> --role <${roles.join("|")}> [--name <display name>]   (password from standard input)
  npm run user -- list
  npm run user -- deactivate <email>
  npm run user -- reactivate <email>
  npm run user -- set-role <email> <role>
  npm run user -- set-password <email>   (password from standard input)`;

function option(options: Record<string, string | true>, name: string): string | undefined {
  const value = options[name];
  if (value === true) throw new AppError("invalid_input", `--${name} needs a value.\n${usage}`);
  return value;
}

function needs(value: string | undefined, what: string): string {
  if (!value) throw new AppError("invalid_input", `Missing ${what}.\n${usage}`);
  return value;
}

await runCommand(async () => {
  const { positional, options } = parseArguments(process.argv.slice(2));
  const [command, ...rest] = positional;
  const actor = cliActor();
  const now = new Date();
  switch (command) {
    case "create": {
      const email = needs(option(options, "email"), "--email");
      const role = needs(option(options, "role"), "--role");
      const displayName = option(options, "name") ?? email.split("@")[0];
      const password = await readPasswordFromStdin(`Password for ${email}`);
      const user = await withDefaultDatabase((prisma) => createUser(prisma, { actor, email, displayName, role, password, now }));
      console.log(`Created ${user.displayName} <${user.email}> as ${user.role}.`);
      return;
    }
    case "list": {
      const users = await withDefaultDatabase((prisma) => listUsers(prisma));
      console.log(
        formatTable(
          ["email", "name", "role", "status", "open sessions", "last sign-in (UTC)"],
          users.map((user) => [user.email, user.displayName, user.role, user.active ? "active" : "deactivated", String(user.openSessions), user.lastSignInAt?.toISOString().slice(0, 16).replace("T", " ") ?? "-"]),
        ),
      );
      return;
    }
    case "deactivate":
    case "reactivate": {
      const email = needs(rest[0], "<email>");
      await withDefaultDatabase(async (prisma) => {
        const user = await getUserByEmailOrThrow(prisma, { email });
        if (command === "deactivate") {
          const result = await deactivateUser(prisma, { actor, userId: user.id, now });
          console.log(result.alreadyInactive ? `${user.email} was already deactivated.` : `Deactivated ${user.email}; ${result.endedSessions} open session(s) ended.`);
        } else {
          const result = await reactivateUser(prisma, { actor, userId: user.id, now });
          console.log(result.alreadyActive ? `${user.email} was already active.` : `Reactivated ${user.email}.`);
        }
      });
      return;
    }
    case "set-role": {
      const email = needs(rest[0], "<email>");
      const role = needs(rest[1], "<role>");
      await withDefaultDatabase(async (prisma) => {
        const user = await getUserByEmailOrThrow(prisma, { email });
        const result = await changeRole(prisma, { actor, userId: user.id, role, now });
        console.log(result.changed ? `${user.email}: ${result.from} → ${result.to}.` : `${user.email} already has the role ${result.to}.`);
      });
      return;
    }
    case "set-password": {
      const email = needs(rest[0], "<email>");
      const password = await readPasswordFromStdin(`New password for ${email}`);
      await withDefaultDatabase(async (prisma) => {
        const user = await getUserByEmailOrThrow(prisma, { email });
        const result = await setUserPassword(prisma, { actor, userId: user.id, password, now });
        console.log(`New password set for ${user.email}; ${result.endedSessions} open session(s) ended.`);
      });
      return;
    }
    default:
      console.error(command ? `Unknown command "${command}".\n${usage}` : usage);
      return command ? 1 : 0;
  }
});
