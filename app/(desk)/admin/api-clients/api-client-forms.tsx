"use client";
import { useActionState, useState } from "react";
import { apiScopes } from "@/lib/auth/permissions";
import { idleFormState, type FormState } from "@/lib/http/form-state";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { createApiClientAction, revokeApiClientAction } from "@/app/(desk)/admin/api-clients/actions";

const scopeHints: Record<(typeof apiScopes)[number], string> = {
  "alerts:write": "send scored alerts",
  "labels:write": "send late labels (chargebacks, customer reports)",
  "outcomes:write": "send outcomes decided elsewhere",
  "metrics:read": "read model and reviewer metrics",
  "exports:read": "download label exports",
};

function NewToken({ name, token }: { name: string; token: string }) {
  const [copied, setCopied] = useState(false);
  return (
    <div className="space-y-2 rounded border border-attention/40 bg-attention-wash p-3" role="status">
      <p className="text-sm font-semibold">Token for {name}: copy it now. It is shown only this once and cannot be recovered.</p>
      <div className="flex flex-wrap items-center gap-2">
        <label htmlFor="new-token" className="sr-only">
          New API token
        </label>
        <input id="new-token" readOnly value={token} className="field w-full max-w-xl font-mono text-xs" onFocus={(event) => event.currentTarget.select()} />
        <button
          type="button"
          className="btn"
          onClick={async () => {
            await navigator.clipboard.writeText(token);
            setCopied(true);
          }}
        >
          {copied ? "Copied" : "Copy token"}
        </button>
      </div>
      <p className="text-xs text-ink-soft">
        Send it as <code className="font-mono">Authorization: Bearer &lt;token&gt;</code>. Store it in your secret manager; if it is lost, revoke this client and create a new one.
      </p>
    </div>
  );
}

export function CreateApiClientForm() {
  const [state, action] = useActionState(createApiClientAction, idleFormState as FormState<{ name: string; token: string }>);
  return (
    <div className="space-y-3">
      <h2 id="create-client-heading" className="text-base font-semibold">
        Create an API client
      </h2>
      {state.status === "ok" && state.data ? <NewToken name={state.data.name} token={state.data.token} /> : <FormMessage state={state} />}
      <form action={action} className="space-y-3" aria-labelledby="create-client-heading">
        <div className="flex max-w-sm flex-col gap-1">
          <label htmlFor="client-name" className="text-sm font-medium">
            Name
          </label>
          <input id="client-name" name="name" type="text" autoComplete="off" required defaultValue={state.status === "error" ? state.values.name : ""} className="field" aria-describedby="client-name-hint" />
          <p id="client-name-hint" className="text-xs text-ink-soft">
            Lowercase letters, digits, dots, dashes; for example scoring-service-prod.
          </p>
          <FieldError state={state} name="name" id="client-name-error" />
        </div>
        <fieldset className="space-y-1">
          <legend className="text-sm font-medium">Scopes</legend>
          {apiScopes.map((scope) => (
            <label key={scope} className="flex items-center gap-2 text-sm">
              <input type="checkbox" name="scopes" value={scope} />
              <span className="font-mono text-xs">{scope}</span>
              <span className="text-ink-soft">— {scopeHints[scope]}</span>
            </label>
          ))}
          <FieldError state={state} name="scopes" id="client-scopes-error" />
        </fieldset>
        <SubmitButton pendingLabel="Creating…">Create API client</SubmitButton>
      </form>
    </div>
  );
}

/** Stays mounted after the revocation (the row is keyed by client), so its message survives the refresh. */
export function RevokeApiClientButton({ clientId, name, revoked }: { clientId: string; name: string; revoked: boolean }) {
  const [state, action] = useActionState(revokeApiClientAction, idleFormState);
  if (revoked) return <FormMessage state={state} />;
  return (
    <form
      action={action}
      className="flex flex-col gap-1"
      onSubmit={(event) => {
        if (!window.confirm(`Revoke "${name}"? Its token stops working at once.`)) event.preventDefault();
      }}
    >
      <input type="hidden" name="clientId" value={clientId} />
      <SubmitButton className="btn px-2 py-0.5 text-xs" pendingLabel="Revoking…">
        <span>
          Revoke<span className="sr-only"> {name}</span>
        </span>
      </SubmitButton>
      <FormMessage state={state} />
    </form>
  );
}
