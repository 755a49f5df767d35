"use client";
// Small pieces shared by the forms that use formAction() (lib/http/server-action.ts).
import { useFormStatus } from "react-dom";
import type { ReactNode } from "react";
import type { FormState } from "@/lib/http/form-state";

export function SubmitButton({ children, pendingLabel, className = "btn btn-primary" }: { children: ReactNode; pendingLabel?: string; className?: string }) {
  const { pending } = useFormStatus();
  return (
    <button type="submit" className={className} disabled={pending} aria-disabled={pending}>
      {pending ? (pendingLabel ?? children) : children}
    </button>
  );
}

export function FieldError({ state, name, id }: { state: FormState<unknown>; name: string; id: string }) {
  const errors = state.fieldErrors[name];
  if (!errors?.length) return null;
  return (
    <p id={id} className="text-xs text-overdue">
      {errors.join(" ")}
    </p>
  );
}

/** The form's one-sentence outcome; errors are announced to screen readers at once. */
export function FormMessage({ state }: { state: FormState<unknown> }) {
  if (state.status === "idle" || !state.message) return null;
  return state.status === "error" ? (
    <p role="alert" className="rounded border border-overdue/40 bg-overdue-wash px-3 py-2 text-sm text-overdue">
      {state.message}
    </p>
  ) : (
    <p role="status" className="rounded border border-fine/40 bg-fine-wash px-3 py-2 text-sm text-fine">
      {state.message}
    </p>
  );
}
