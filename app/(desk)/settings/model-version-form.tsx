"use client";
// Admins register a model version, or change one by entering its model name and version again.
import { useActionState } from "react";
import { idleFormState } from "@/lib/http/form-state";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { saveModelVersionAction } from "@/app/(desk)/settings/model-version-actions";

const textFields = [
  { name: "modelName", label: "Model name", hint: "As the scoring service sends it, e.g. card-risk-gbm." },
  { name: "version", label: "Version", hint: "e.g. 5.2.0" },
  { name: "negativeSamplingRate", label: "β, share of genuine examples kept in training", hint: "Probability scores only; 1 (or empty) when the training set was not undersampled." },
  { name: "priorHitRate", label: "Prior hit rate", hint: "Anomaly scores: the share of alerts expected to be fraud until a calibration map exists." },
  { name: "alertThreshold", label: "Alert threshold", hint: "The score from which the model raises an alert." },
] as const;

export function ModelVersionForm() {
  const [state, action] = useActionState(saveModelVersionAction, idleFormState);
  const value = (name: string) => state.values[name] ?? "";
  return (
    <form action={action} className="space-y-3" aria-labelledby="model-version-form-heading">
      <h3 id="model-version-form-heading" className="text-sm font-semibold">
        Register or change a model version
      </h3>
      <p className="text-xs text-ink-soft">
        Entering a model name and version that exist changes that version. The score kind of a version that already has alerts cannot change: register a new
        version instead. Changing β or the prior hit rate applies to alerts that arrive from now on and at the next calibration refit.
      </p>
      <FormMessage state={state} />
      <div className="grid max-w-3xl grid-cols-1 gap-3 sm:grid-cols-2">
        <div className="flex flex-col gap-1">
          <label htmlFor="mv-scoreKind" className="text-sm font-medium">
            Score kind
          </label>
          <select id="mv-scoreKind" name="scoreKind" className="field" defaultValue={value("scoreKind") || "probability"} aria-invalid={Boolean(state.fieldErrors.scoreKind)}>
            <option value="probability">probability (a classifier&apos;s output in 0–1)</option>
            <option value="anomaly">anomaly (a detector&apos;s score, any number)</option>
          </select>
          <FieldError state={state} name="scoreKind" id="mv-scoreKind-error" />
        </div>
        {textFields.map((field) => (
          <div key={field.name} className="flex flex-col gap-1">
            <label htmlFor={`mv-${field.name}`} className="text-sm font-medium">
              {field.label}
            </label>
            <input
              id={`mv-${field.name}`}
              name={field.name}
              className="field"
              defaultValue={value(field.name)}
              required={field.name === "modelName" || field.name === "version" || field.name === "alertThreshold"}
              inputMode={field.name === "modelName" || field.name === "version" ? undefined : "decimal"}
              aria-describedby={`mv-${field.name}-hint`}
              aria-invalid={Boolean(state.fieldErrors[field.name])}
            />
            <span id={`mv-${field.name}-hint`} className="text-xs text-ink-soft">
              {field.hint}
            </span>
            <FieldError state={state} name={field.name} id={`mv-${field.name}-error`} />
          </div>
        ))}
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" name="active" defaultChecked /> Active (scoring now; untick to retire)
        </label>
      </div>
      <SubmitButton pendingLabel="Saving…">Save model version</SubmitButton>
    </form>
  );
}
