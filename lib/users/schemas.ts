// Inputs and outputs of user administration.
import { z } from "zod";
import { roles } from "@/lib/auth/permissions";
import { emailSchema, newPasswordSchema } from "@/lib/auth/schemas";

export const roleSchema = z.enum(roles, `Expected one of: ${roles.join(", ")}.`);

export const displayNameSchema = z
  .string({ error: "Enter a name." })
  .trim()
  .min(1, "Enter a name.")
  .max(200, "A name has at most 200 characters.");

export const createUserInputSchema = z.object({
  email: emailSchema,
  displayName: displayNameSchema,
  role: roleSchema,
  password: newPasswordSchema,
});
export type CreateUserInput = z.infer<typeof createUserInputSchema>;

export const userIdSchema = z.uuid("Unknown user.");

export const changeRoleInputSchema = z.object({ userId: userIdSchema, role: roleSchema });

export interface UserSummary {
  id: string;
  email: string;
  displayName: string;
  role: string;
  active: boolean;
  createdAt: Date;
  /** Sessions not yet ended (some may have timed out without anyone noticing yet). */
  openSessions: number;
  lastSignInAt: Date | null;
}

export const userIdInputSchema = z.object({ userId: userIdSchema });
