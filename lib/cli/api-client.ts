// npm run api-client -- <command>: credentials for the scoring service, audited as `cli:<os user>`.
//   create --name <name> --scopes <s1,s2>   prints the token once, alone on standard output
//   list
//   revoke <name>
import { AppError } from "@/lib/errors";
import { runCommand, parseArguments } from "@/lib/cli/run-command";
import { cliActor, formatTable, withDefaultDatabase } from "@/lib/cli/cli-support";
import { apiScopes } from "@/lib/auth/permissions";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { listApiClients } from "@/lib/api-clients/list-api-clients";
import { revokeApiClient } from "@/lib/api-clients/revoke-api-client";

const usage = `Usage:
  npm run api-client -- create --name <name> --scopes <${apiScopes.join(",")}>
  npm run api-client -- list
  npm run api-client -- revoke <name>`;

const when = (date: Date | null) => date?.toISOString().slice(0, 16).replace("T", " ") ?? "-";

await runCommand(async () => {
  const { positional, options } = parseArguments(process.argv.slice(2));
  const [command, ...rest] = positional;
  const actor = cliActor();
  switch (command) {
    case "create": {
      const name = options.name;
      const scopes = options.scopes;
      if (typeof name !== "string" || typeof scopes !== "string") throw new AppError("invalid_input", `create needs --name and --scopes.\n${usage}`);
      const { client, token } = await withDefaultDatabase((prisma) =>
        createApiClient(prisma, { actor, name, scopes: scopes.split(",").map((scope) => scope.trim()).filter(Boolean), now: new Date() }),
      );
      // The explanation goes to standard error, so `TOKEN=$(npm run -s api-client -- create …)` captures the token alone.
      console.error(`Created API client "${client.name}" with scopes ${client.scopes.join(", ")}. Its token follows; it is shown only this once:`);
      console.log(token);
      return;
    }
    case "list": {
      const clients = await withDefaultDatabase((prisma) => listApiClients(prisma));
      console.log(
        formatTable(
          ["name", "token starts with", "scopes", "created (UTC)", "last used (UTC)", "status"],
          clients.map((client) => [client.name, `${client.tokenPrefix}…`, client.scopes.join(","), when(client.createdAt), when(client.lastUsedAt), client.revokedAt ? `revoked ${when(client.revokedAt)}` : "active"]),
        ),
      );
      return;
    }
    case "revoke": {
      const name = rest[0];
      if (!name) throw new AppError("invalid_input", `revoke needs the client's name.\n${usage}`);
      const result = await withDefaultDatabase((prisma) => revokeApiClient(prisma, { actor, client: { name }, now: new Date() }));
      console.log(result.alreadyRevoked ? `"${result.name}" was already revoked.` : `Revoked "${result.name}"; its token no longer works.`);
      return;
    }
    default:
      console.error(command ? `Unknown command "${command}".\n${usage}` : usage);
      return command ? 1 : 0;
  }
});
