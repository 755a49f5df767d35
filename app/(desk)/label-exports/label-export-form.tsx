"use client";
import { useActionState } from "react";
import { idleFormState } from "@/lib/http/form-state";
import { EXPORT_FORMATS } from "@/lib/exports/schemas";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { createLabelExportAction } from "@/app/(desk)/label-exports/actions";

export interface ModelVersionChoice {
  id: string;
  label: string;
  active: boolean;
}

const formatHints: Record<(typeof EXPORT_FORMATS)[number], string> = {
  csv: "CSV (RFC 4180, header row)",
  jsonl: "JSON Lines",
  parquet: "Apache Parquet",
};

export function LabelExportForm({ modelVersions, defaults }: { modelVersions: ModelVersionChoice[]; defaults: { from: string; asOf: string; maturityDays: number } }) {
  const [state, action] = useActionState(createLabelExportAction, idleFormState);
  // After a submission (refused or started) the form shows what was sent, not the defaults again.
  const kept = (name: string, fallback: string) => (state.status === "idle" ? fallback : (state.values[name] ?? fallback));
  return (
    <div className="space-y-3">
      <h2 id="new-export-heading" className="text-base font-semibold">
        New export
      </h2>
      <FormMessage state={state} />
      <form action={action} className="space-y-4" aria-labelledby="new-export-heading">
        <fieldset className="space-y-1">
          <legend className="text-sm font-medium">Model versions</legend>
          {modelVersions.length === 0 && <p className="text-sm text-ink-soft">No model versions are registered yet.</p>}
          <div className="flex flex-wrap gap-x-5 gap-y-1">
            {modelVersions.map((version) => (
              <label key={version.id} className="flex items-center gap-2 text-sm">
                <input type="checkbox" name="modelVersion" value={version.id} defaultChecked={version.active} />
                <span>{version.label}</span>
                {!version.active && <span className="text-xs text-ink-soft">(retired)</span>}
              </label>
            ))}
          </div>
          <FieldError state={state} name="modelVersion" id="export-versions-error" />
          <FieldError state={state} name="modelVersionIds" id="export-version-ids-error" />
        </fieldset>

        <div className="flex flex-wrap gap-4">
          <div className="flex flex-col gap-1">
            <label htmlFor="export-from" className="text-sm font-medium">
              Occurred from (UTC)
            </label>
            <input id="export-from" name="from" type="date" required defaultValue={kept("from", defaults.from)} className="field" />
            <FieldError state={state} name="from" id="export-from-error" />
            <FieldError state={state} name="occurredFrom" id="export-occurred-from-error" />
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="export-to" className="text-sm font-medium">
              Occurred before (UTC)
            </label>
            <input id="export-to" name="to" type="date" defaultValue={kept("to", "")} className="field" aria-describedby="export-to-hint" />
            <p id="export-to-hint" className="text-xs text-ink-soft">
              Empty: up to the as-of time.
            </p>
            <FieldError state={state} name="occurredTo" id="export-to-error" />
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="export-as-of" className="text-sm font-medium">
              As of (UTC)
            </label>
            <input id="export-as-of" name="asOf" type="datetime-local" required defaultValue={kept("asOf", defaults.asOf)} className="field" aria-describedby="export-as-of-hint" />
            <p id="export-as-of-hint" className="max-w-xs text-xs text-ink-soft">
              Only outcomes closed and labels received by then.
            </p>
            <FieldError state={state} name="asOf" id="export-as-of-error" />
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="export-maturity" className="text-sm font-medium">
              Maturity (days)
            </label>
            <input
              id="export-maturity"
              name="maturityDays"
              type="number"
              min={0}
              max={730}
              step={1}
              required
              defaultValue={kept("maturityDays", String(defaults.maturityDays))}
              className="field w-28"
              aria-describedby="export-maturity-hint"
            />
            <p id="export-maturity-hint" className="max-w-xs text-xs text-ink-soft">
              Only alerts at least this old at the as-of time, so late chargebacks have arrived.
            </p>
            <FieldError state={state} name="maturityDays" id="export-maturity-error" />
          </div>
        </div>

        <fieldset className="space-y-1">
          <legend className="text-sm font-medium">Rows</legend>
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="keepInconclusive" value="true" />
            Keep inconclusive outcomes (label empty)
          </label>
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="keepUnreviewed" value="true" />
            Keep alerts without an outcome or label yet (label empty)
          </label>
          <input type="hidden" name="includeBelowTheLine" value="false" />
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="includeBelowTheLine" value="true" defaultChecked />
            Include below-the-line samples (weight 1/π)
          </label>
        </fieldset>

        <fieldset className="space-y-1">
          <legend className="text-sm font-medium">Format</legend>
          <div className="flex flex-wrap gap-x-5">
            {EXPORT_FORMATS.map((format) => (
              <label key={format} className="flex items-center gap-2 text-sm">
                <input type="radio" name="format" value={format} defaultChecked={kept("format", "csv") === format} />
                {formatHints[format]}
              </label>
            ))}
          </div>
          <FieldError state={state} name="format" id="export-format-error" />
        </fieldset>

        <SubmitButton pendingLabel="Starting…">Start export</SubmitButton>
      </form>
    </div>
  );
}
