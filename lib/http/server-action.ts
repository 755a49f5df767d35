// The wrappers of every server action. Each action is registered in lib/http/route-registry.ts by
// "<file>#<export>", and the wrapper checks that entry's permission on the server before anything
// else (OWASP ASVS 5.0 §8.3.1, from memory), validates the form with zod and returns field errors,
// and turns unexpected errors into a generic message with a request id (§16.5.1). Next's own
// origin check for server actions stays on (no `serverActions.allowedOrigins` is configured).
//
//   "use server";
//   export const createUserAction = formAction("app/(desk)/admin/users/actions.ts#createUserAction",
//     createUserFormSchema, async (input, { user, context, now }) => ({ message: "Created." }), { keep: ["email"] });
import "server-only";
import { headers } from "next/headers";
import { unstable_rethrow } from "next/navigation";
import type { z } from "zod";
import { db } from "@/lib/db/client";
import { isAppError } from "@/lib/errors";
import { recordStandaloneAuditEvent } from "@/lib/audit/record-audit-event";
import type { UserActor } from "@/lib/auth/actor";
import { getCurrentUser } from "@/lib/auth/current-user";
import { decideActionAccess } from "@/lib/http/route-access";
import { serverActionAccess, type ServerActionKey } from "@/lib/http/route-registry";
import { requestContextOf, type RequestContext } from "@/lib/http/request-context";
import type { FormState } from "@/lib/http/form-state";

type UserFor<K extends ServerActionKey> = (typeof serverActionAccess)[K] extends "public" ? UserActor | null : UserActor;

export interface ActionContext<K extends ServerActionKey> {
  user: UserFor<K>;
  context: RequestContext;
  now: Date;
}

export interface ActionSuccess<Data> {
  message: string;
  data?: Data;
}

/** The form's fields: one value → a string, several (checkboxes) → an array. Next's own $ACTION_ fields are left out. */
export function formValues(formData: FormData): Record<string, string | string[]> {
  const values: Record<string, string | string[]> = {};
  for (const name of new Set(formData.keys())) {
    if (name.startsWith("$ACTION")) continue;
    const all = formData.getAll(name).filter((value): value is string => typeof value === "string");
    values[name] = all.length === 1 ? all[0] : all;
  }
  return values;
}

async function authorize<K extends ServerActionKey>(key: K): Promise<{ ok: true; action: ActionContext<K> } | { ok: false; message: string; context: RequestContext }> {
  const context = requestContextOf(await headers());
  const user = await getCurrentUser();
  const access = serverActionAccess[key];
  const decision = decideActionAccess(access, user ? { type: "user", role: user.role } : { type: "none" });
  if (decision.allowed) return { ok: true, action: { user: user as UserFor<K>, context, now: new Date() } };
  if (user) {
    await recordStandaloneAuditEvent(db(), {
      actor: { type: "user", id: user.id, label: user.email },
      event: { action: "user.refused", payload: { permission: String(access), target: `action ${key}` } },
      subject: { type: "user", id: user.id },
      context,
    });
  }
  return { ok: false, message: decision.message, context };
}

function keptValues(raw: Record<string, string | string[]>, keep: readonly string[]): Record<string, string> {
  const values: Record<string, string> = {};
  for (const name of keep) {
    const value = raw[name];
    if (typeof value === "string") values[name] = value;
  }
  return values;
}

function failure<Data>(message: string, values: Record<string, string>, fieldErrors: Record<string, string[]> = {}): FormState<Data> {
  return { status: "error", message, fieldErrors, values };
}

/** A server action for a form driven by useActionState: (previous state, form data) → new state. */
export function formAction<K extends ServerActionKey, Schema extends z.ZodType, Data = never>(
  key: K,
  schema: Schema,
  handler: (input: z.output<Schema>, action: ActionContext<K>) => Promise<ActionSuccess<Data>>,
  options: { keep?: readonly string[] } = {},
): (previous: FormState<Data>, formData: FormData) => Promise<FormState<Data>> {
  if (!(key in serverActionAccess)) throw new Error(`formAction: "${key}" has no entry in lib/http/route-registry.ts`);
  return async (_previous, formData) => {
    const raw = formValues(formData);
    const values = keptValues(raw, options.keep ?? []);
    const authorized = await authorize(key);
    if (!authorized.ok) return failure(authorized.message, values);
    const parsed = schema.safeParse(raw);
    if (!parsed.success) {
      const fieldErrors: Record<string, string[]> = {};
      for (const issue of parsed.error.issues) {
        const field = String(issue.path[0] ?? "form");
        (fieldErrors[field] ??= []).push(issue.message);
      }
      return failure("Some fields need another look.", values, fieldErrors);
    }
    try {
      const result = await handler(parsed.data, authorized.action);
      return { status: "ok", message: result.message, fieldErrors: {}, values, ...(result.data !== undefined ? { data: result.data } : {}) };
    } catch (error) {
      unstable_rethrow(error); // redirect() and notFound() are control flow, not failures
      if (isAppError(error)) {
        const fieldErrors: Record<string, string[]> = {};
        for (const issue of error.issues) (fieldErrors[issue.path || "form"] ??= []).push(issue.message);
        return failure(error.message, values, fieldErrors);
      }
      const { requestId } = authorized.action.context;
      console.error(`[${requestId}] server action ${key} failed:`, error);
      return failure(`Something went wrong on our side. If it happens again, report request id ${requestId}.`, values);
    }
  };
}

/** A server action for a plain form without state (sign-out): (form data) → nothing, usually a redirect. */
export function plainAction<K extends ServerActionKey>(key: K, handler: (formData: FormData, action: ActionContext<K>) => Promise<void>): (formData: FormData) => Promise<void> {
  if (!(key in serverActionAccess)) throw new Error(`plainAction: "${key}" has no entry in lib/http/route-registry.ts`);
  return async (formData) => {
    const authorized = await authorize(key);
    if (!authorized.ok) throw new Error(authorized.message);
    await handler(formData, authorized.action);
  };
}
