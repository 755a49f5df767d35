"use client";
import { useActionState } from "react";
import { idleFormState } from "@/lib/http/form-state";
import { PASSWORD_MIN_LENGTH } from "@/lib/auth/schemas";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { changeOwnPasswordAction } from "@/app/(desk)/account/actions";

const fields = [
  { name: "currentPassword", label: "Current password", autoComplete: "current-password" },
  { name: "newPassword", label: "New password", autoComplete: "new-password" },
  { name: "confirmPassword", label: "New password again", autoComplete: "new-password" },
] as const;

export function ChangePasswordForm() {
  const [state, action] = useActionState(changeOwnPasswordAction, idleFormState);
  return (
    <form action={action} className="space-y-3" aria-labelledby="password-heading">
      <h2 id="password-heading" className="text-base font-semibold">
        Change your password
      </h2>
      <FormMessage state={state} />
      {fields.map((field) => (
        <div key={field.name} className="flex max-w-sm flex-col gap-1">
          <label htmlFor={field.name} className="text-sm font-medium">
            {field.label}
          </label>
          <input id={field.name} name={field.name} type="password" autoComplete={field.autoComplete} required className="field" aria-invalid={Boolean(state.fieldErrors[field.name])} />
          <FieldError state={state} name={field.name} id={`${field.name}-error`} />
        </div>
      ))}
      <p className="text-xs text-ink-soft">At least {PASSWORD_MIN_LENGTH} characters; a few unrelated words make a strong one. Your other sessions will be signed out.</p>
      <SubmitButton pendingLabel="Changing…">Change password</SubmitButton>
    </form>
  );
}
