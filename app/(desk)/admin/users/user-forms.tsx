"use client";
import { useActionState } from "react";
import { roles } from "@/lib/auth/permissions";
import { idleFormState } from "@/lib/http/form-state";
import { PASSWORD_MIN_LENGTH } from "@/lib/auth/schemas";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { changeRoleAction, createUserAction, deactivateUserAction, reactivateUserAction } from "@/app/(desk)/admin/users/actions";

export function CreateUserForm() {
  const [state, action] = useActionState(createUserAction, idleFormState);
  return (
    <form action={action} className="space-y-3" aria-labelledby="create-user-heading">
      <h2 id="create-user-heading" className="text-base font-semibold">
        Add a person
      </h2>
      <FormMessage state={state} />
      <div className="grid gap-3 sm:grid-cols-2">
        <div className="flex flex-col gap-1">
          <label htmlFor="new-email" className="text-sm font-medium">
            Email
          </label>
          <input id="new-email" name="email" type="email" autoComplete="off" required defaultValue={state.status === "error" ? state.values.email : ""} className="field" />
          <FieldError state={state} name="email" id="new-email-error" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="new-name" className="text-sm font-medium">
            Name
          </label>
          <input id="new-name" name="displayName" type="text" autoComplete="off" required defaultValue={state.status === "error" ? state.values.displayName : ""} className="field" />
          <FieldError state={state} name="displayName" id="new-name-error" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="new-role" className="text-sm font-medium">
            Role
          </label>
          <select id="new-role" name="role" defaultValue={state.status === "error" ? (state.values.role ?? "analyst") : "analyst"} className="field">
            {roles.map((role) => (
              <option key={role} value={role}>
                {role}
              </option>
            ))}
          </select>
          <FieldError state={state} name="role" id="new-role-error" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="new-password" className="text-sm font-medium">
            Initial password
          </label>
          <input id="new-password" name="password" type="password" autoComplete="new-password" required minLength={PASSWORD_MIN_LENGTH} className="field" aria-describedby="new-password-hint" />
          <p id="new-password-hint" className="text-xs text-ink-soft">
            At least {PASSWORD_MIN_LENGTH} characters. They can change it on their Account page.
          </p>
          <FieldError state={state} name="password" id="new-password-error" />
        </div>
      </div>
      <SubmitButton pendingLabel="Adding…">Add person</SubmitButton>
    </form>
  );
}

export function UserRowActions({ userId, name, role, active, isSelf }: { userId: string; name: string; role: string; active: boolean; isSelf: boolean }) {
  const [roleState, roleAction] = useActionState(changeRoleAction, idleFormState);
  const [activeState, activeAction] = useActionState(active ? deactivateUserAction : reactivateUserAction, idleFormState);
  return (
    <div className="flex flex-col gap-1">
      <div className="flex flex-wrap items-center gap-2">
        <form action={roleAction} className="flex items-center gap-1">
          <input type="hidden" name="userId" value={userId} />
          <label htmlFor={`role-${userId}`} className="sr-only">
            Role of {name}
          </label>
          <select id={`role-${userId}`} name="role" defaultValue={role} className="field py-0.5 text-xs">
            {roles.map((option) => (
              <option key={option} value={option}>
                {option}
              </option>
            ))}
          </select>
          <SubmitButton className="btn px-2 py-0.5 text-xs" pendingLabel="Saving…">
            <span>
              Set role<span className="sr-only"> of {name}</span>
            </span>
          </SubmitButton>
        </form>
        {!isSelf && (
          <form action={activeAction}>
            <input type="hidden" name="userId" value={userId} />
            <SubmitButton className="btn px-2 py-0.5 text-xs" pendingLabel="Saving…">
              <span>
                {active ? "Deactivate" : "Reactivate"}
                <span className="sr-only"> {name}</span>
              </span>
            </SubmitButton>
          </form>
        )}
      </div>
      <FormMessage state={roleState} />
      <FormMessage state={activeState} />
    </div>
  );
}
