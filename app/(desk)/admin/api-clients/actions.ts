"use server";
import { revalidatePath } from "next/cache";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { revokeApiClient } from "@/lib/api-clients/revoke-api-client";
import { createApiClientFormSchema, revokeApiClientInputSchema } from "@/lib/api-clients/schemas";

export const createApiClientAction = formAction(
  "app/(desk)/admin/api-clients/actions.ts#createApiClientAction",
  createApiClientFormSchema,
  async (input, { user, context, now }) => {
    const { client, token } = await createApiClient(db(), { actor: user, name: input.name, scopes: input.scopes, now, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
    revalidatePath("/admin/api-clients");
    // The token travels to this one response and is never stored or shown again.
    return { message: `Created the API client "${client.name}".`, data: { name: client.name, token } };
  },
  { keep: ["name"] },
);

export const revokeApiClientAction = formAction(
  "app/(desk)/admin/api-clients/actions.ts#revokeApiClientAction",
  revokeApiClientInputSchema,
  async (input, { user, context, now }) => {
    const result = await revokeApiClient(db(), { actor: user, client: { id: input.clientId }, now, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
    revalidatePath("/admin/api-clients");
    return { message: result.alreadyRevoked ? `"${result.name}" was already revoked.` : `Revoked "${result.name}"; its token no longer works.` };
  },
);
