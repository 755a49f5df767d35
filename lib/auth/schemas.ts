// Inputs of sign-in and password changes. Passwords are taken exactly as typed: no trimming, no
// composition rules, long passphrases welcome (OWASP ASVS 5.0 §6.2.1 minimum length, §6.2.5 no
// composition rules, §6.2.8 verified as received, §6.2.9 at least 64 characters allowed; from memory).
import { z } from "zod";

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 256;

export const emailSchema = z
  .string({ error: "Enter an email address." })
  .trim()
  .toLowerCase()
  .max(254, "An email address has at most 254 characters.")
  .pipe(z.email("Enter an email address such as name@example.org."));

export const newPasswordSchema = z
  .string({ error: "Enter a password." })
  .min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters.`)
  .max(PASSWORD_MAX_LENGTH, `Use at most ${PASSWORD_MAX_LENGTH} characters.`);

export const signInInputSchema = z.object({
  email: emailSchema,
  password: z.string({ error: "Enter your password." }).min(1, "Enter your password.").max(PASSWORD_MAX_LENGTH, "That password is too long."),
});
export type SignInInput = z.infer<typeof signInInputSchema>;

export const changeOwnPasswordInputSchema = z
  .object({
    currentPassword: z.string({ error: "Enter your current password." }).min(1, "Enter your current password.").max(PASSWORD_MAX_LENGTH),
    newPassword: newPasswordSchema,
    confirmPassword: z.string(),
  })
  .refine((input) => input.newPassword === input.confirmPassword, { path: ["confirmPassword"], message: "The two new passwords differ." })
  .refine((input) => input.newPassword !== input.currentPassword, { path: ["newPassword"], message: "Choose a password different from the current one." });
export type ChangeOwnPasswordInput = z.infer<typeof changeOwnPasswordInputSchema>;

/** The sign-in form: the credentials and where to go afterwards (checked by safeNextPath()). */
export const signInFormSchema = signInInputSchema.extend({ next: z.string().max(1000).optional() });
