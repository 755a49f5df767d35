// Inputs and outputs of API clients: the credentials of the scoring service and other machines.
import { z } from "zod";
import { apiScopes } from "@/lib/auth/permissions";

/** Same rule as the CHECK on api_clients.name. */
export const apiClientNameSchema = z
  .string({ error: "Enter a name." })
  .trim()
  .regex(/^[a-z0-9][a-z0-9._-]{1,62}$/, "Use 2 to 63 lowercase letters, digits, dots, dashes or underscores, starting with a letter or digit.");

export const apiScopeSchema = z.enum(apiScopes, `Expected one of: ${apiScopes.join(", ")}.`);

export const apiScopesSchema = z
  .array(apiScopeSchema)
  .min(1, "Choose at least one scope.")
  .transform((scopes) => apiScopes.filter((scope) => scopes.includes(scope)));

export const createApiClientInputSchema = z.object({ name: apiClientNameSchema, scopes: apiScopesSchema });
export type CreateApiClientInput = z.infer<typeof createApiClientInputSchema>;

export interface ApiClientSummary {
  id: string;
  name: string;
  tokenPrefix: string;
  scopes: string[];
  createdAt: Date;
  createdBy: string | null;
  lastUsedAt: Date | null;
  revokedAt: Date | null;
}

/** `tdk_` and 43 base64url characters (32 random bytes). The prefix makes a leaked token easy to
 * recognise in logs and by secret scanners. */
export const API_TOKEN_PREFIX = "tdk_";
export const apiTokenPattern = /^tdk_[A-Za-z0-9_-]{43}$/;
/** How much of a token is stored in clear, so people can tell tokens apart. */
export const VISIBLE_TOKEN_CHARACTERS = 10;

/** The screen's form: scopes arrive as one checkbox value, several, or none. */
export const createApiClientFormSchema = z.object({
  name: apiClientNameSchema,
  scopes: z.preprocess((value) => (value === undefined ? [] : Array.isArray(value) ? value : [value]), apiScopesSchema),
});

export const revokeApiClientInputSchema = z.object({ clientId: z.uuid("Unknown API client.") });
