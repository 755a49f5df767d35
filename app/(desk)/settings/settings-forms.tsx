"use client";
// The Settings screen's forms. Each keeps what the person typed when the server refuses it (the
// values of the submitted form, none of them secret) and shows each problem beside its field.
// `readOnly` renders the same form disabled, for roles that may see settings but not change them.
import { useActionState, type ReactNode } from "react";
import { idleFormState, type FormState } from "@/lib/http/form-state";
import { FieldError, FormMessage, SubmitButton } from "@/app/components/form-parts";
import { guardAction } from "@/app/components/guard-action";
import {
  bandFromField,
  bandHoursField,
  handlingField,
  OUTCOME_KINDS,
  reasonsField,
  recoveryField,
  SLA_BAND_ROWS,
} from "@/lib/settings/settings-forms";
import { refitCalibrationAction, saveCalibrationSettingsAction, saveCostSettingsAction, saveQueueSettingsAction } from "@/app/(desk)/settings/actions";

type Action = (previous: FormState<never>, formData: FormData) => Promise<FormState<never>>;

/** Keeps the submitted values in the state, so a refused form shows what was typed, not the saved settings. */
function useSettingsForm(action: Action, notSaved: string) {
  return useActionState<FormState<never>, FormData>(async (previous, formData) => {
    const next = await guardAction(action, notSaved)(previous, formData);
    const values: Record<string, string> = {};
    formData.forEach((value, name) => {
      if (typeof value === "string" && !name.startsWith("$ACTION")) values[name] = value;
    });
    return { ...next, values };
  }, idleFormState);
}

function shown(state: FormState<never>, name: string, saved: string): string {
  return state.status === "error" ? (state.values[name] ?? saved) : saved;
}

function Field({
  state,
  name,
  label,
  hint,
  saved,
  unit,
  inputMode = "decimal",
  width = "w-28",
}: {
  state: FormState<never>;
  name: string;
  label: string;
  hint?: string;
  saved: string;
  unit?: string;
  inputMode?: "decimal" | "numeric";
  width?: string;
}) {
  const id = `settings-${name}`;
  const described = [hint ? `${id}-hint` : null, state.fieldErrors[name]?.length ? `${id}-error` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium">
        {label}
      </label>
      <span className="flex items-center gap-1">
        <input
          id={id}
          name={name}
          type="text"
          inputMode={inputMode}
          defaultValue={shown(state, name, saved)}
          aria-describedby={described}
          aria-invalid={state.fieldErrors[name]?.length ? true : undefined}
          className={`field num ${width} disabled:bg-paper disabled:text-ink-soft`}
        />
        {unit && <span className="text-sm text-ink-soft">{unit}</span>}
      </span>
      {hint && (
        <p id={`${id}-hint`} className="text-xs text-ink-soft">
          {hint}
        </p>
      )}
      <FieldError state={state} name={name} id={`${id}-error`} />
    </div>
  );
}

function FormShell({
  title,
  id,
  state,
  action,
  readOnly,
  readOnlyNote,
  children,
  submitLabel,
}: {
  title: string;
  id: string;
  state: FormState<never>;
  action: (formData: FormData) => void;
  readOnly: boolean;
  readOnlyNote: string;
  children: ReactNode;
  submitLabel: string;
}) {
  return (
    <form action={action} aria-labelledby={id} className="panel space-y-3 p-4">
      <h2 id={id} className="text-base font-semibold">
        {title}
      </h2>
      {readOnly && <p className="text-sm text-ink-soft">{readOnlyNote}</p>}
      <FormMessage state={state} />
      <fieldset disabled={readOnly} className="space-y-4">
        {children}
      </fieldset>
      {!readOnly && <SubmitButton pendingLabel="Saving…">{submitLabel}</SubmitButton>}
    </form>
  );
}

export interface QueueFormValues {
  orderMode: "expected_loss" | "loss_per_minute";
  bands: { from: string; hours: string }[];
  expectedHandlingMinutes: string;
  handlingByChannel: Record<string, string>;
  claimLeaseMinutes: string;
  maxHeldPerAnalyst: string;
  fourEyesExposure: string;
  reasons: Record<(typeof OUTCOME_KINDS)[number], string>;
}

const outcomeLabel: Record<(typeof OUTCOME_KINDS)[number], string> = {
  confirmed_fraud: "Confirmed fraud",
  legitimate: "Legitimate",
  inconclusive: "Inconclusive",
};

export function QueueSettingsForm({ saved, channels, currency, readOnly }: { saved: QueueFormValues; channels: string[]; currency: string; readOnly: boolean }) {
  const [state, action] = useSettingsForm(saveQueueSettingsAction, "The queue settings were not saved.");
  const rows = Array.from({ length: SLA_BAND_ROWS }, (_, row) => saved.bands[row] ?? { from: "", hours: "" });
  return (
    <FormShell
      title="Queue"
      id="queue-settings-heading"
      state={state}
      action={action}
      readOnly={readOnly}
      readOnlyNote="Supervisors and admins change these; your role can read them."
      submitLabel="Save queue settings"
    >
      <div className="flex flex-col gap-1">
        <label htmlFor="settings-orderMode" className="text-sm font-medium">
          Order after overdue alerts
        </label>
        {/* Keyed by the value it shows: a select keeps its first defaultValue through React's form reset otherwise. */}
        <select
          key={shown(state, "orderMode", saved.orderMode)}
          id="settings-orderMode"
          name="orderMode"
          defaultValue={shown(state, "orderMode", saved.orderMode)}
          className="field w-fit disabled:bg-paper disabled:text-ink-soft"
        >
          <option value="expected_loss">Expected loss, highest first</option>
          <option value="loss_per_minute">Expected loss per handling minute (Smith&apos;s rule)</option>
        </select>
        <p className="text-xs text-ink-soft">
          Overdue alerts always come first; ties go to the older alert. Smith&apos;s rule moves quick alerts ahead of slow ones of similar expected loss.
        </p>
        <FieldError state={state} name="orderMode" id="settings-orderMode-error" />
      </div>

      <div className="space-y-1">
        <h3 className="text-sm font-medium">SLA by expected loss</h3>
        <p className="text-xs text-ink-soft">
          An alert is due this many hours after it arrives; the band with the largest start at or below its expected loss applies. One band starts at 0.
          Leave a row empty to drop it.
        </p>
        <table className="data-table w-auto" aria-label="SLA bands">
          <thead>
            <tr>
              <th className="num">Expected loss from ({currency})</th>
              <th className="num">Due within (hours)</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((band, row) => (
              <tr key={row}>
                <td className="num">
                  <label htmlFor={`settings-${bandFromField(row)}`} className="sr-only">
                    Band {row + 1}: expected loss from
                  </label>
                  <input
                    id={`settings-${bandFromField(row)}`}
                    name={bandFromField(row)}
                    inputMode="decimal"
                    defaultValue={shown(state, bandFromField(row), band.from)}
                    className="field num w-28 disabled:bg-paper disabled:text-ink-soft"
                  />
                  <FieldError state={state} name={bandFromField(row)} id={`settings-${bandFromField(row)}-error`} />
                </td>
                <td className="num">
                  <label htmlFor={`settings-${bandHoursField(row)}`} className="sr-only">
                    Band {row + 1}: due within hours
                  </label>
                  <input
                    id={`settings-${bandHoursField(row)}`}
                    name={bandHoursField(row)}
                    inputMode="decimal"
                    defaultValue={shown(state, bandHoursField(row), band.hours)}
                    className="field num w-20 disabled:bg-paper disabled:text-ink-soft"
                  />
                  <FieldError state={state} name={bandHoursField(row)} id={`settings-${bandHoursField(row)}-error`} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <FieldError state={state} name="slaBands" id="settings-slaBands-error" />
      </div>

      <div className="grid gap-3 sm:grid-cols-3">
        <Field state={state} name="expectedHandlingMinutes" label="Expected handling time" unit="min" saved={saved.expectedHandlingMinutes} hint="For channels without their own figure." />
        {channels.map((channel) => (
          <Field
            key={channel}
            state={state}
            name={handlingField(channel)}
            label={`Handling time, ${channel.replaceAll("_", " ")}`}
            unit="min"
            saved={saved.handlingByChannel[channel] ?? ""}
            hint="Empty: the usual time."
          />
        ))}
      </div>

      <div className="grid gap-3 sm:grid-cols-3">
        <Field state={state} name="claimLeaseMinutes" label="Claim lease" unit="min" inputMode="numeric" saved={saved.claimLeaseMinutes} hint="A claim not closed in time returns to the queue." />
        <Field state={state} name="maxHeldPerAnalyst" label="Alerts one analyst may hold" inputMode="numeric" saved={saved.maxHeldPerAnalyst} />
        <Field
          state={state}
          name="fourEyesExposure"
          label="Second review from exposure"
          unit={currency}
          saved={saved.fourEyesExposure}
          hint="A legitimate outcome at or above this exposure needs a second person."
        />
      </div>

      <div className="grid gap-3 sm:grid-cols-3">
        {OUTCOME_KINDS.map((outcome) => (
          <div key={outcome} className="flex flex-col gap-1">
            <label htmlFor={`settings-${reasonsField(outcome)}`} className="text-sm font-medium">
              Reasons: {outcomeLabel[outcome]}
            </label>
            <textarea
              id={`settings-${reasonsField(outcome)}`}
              name={reasonsField(outcome)}
              rows={5}
              defaultValue={shown(state, reasonsField(outcome), saved.reasons[outcome])}
              aria-describedby={`settings-${reasonsField(outcome)}-hint`}
              className="field disabled:bg-paper disabled:text-ink-soft"
            />
            <p id={`settings-${reasonsField(outcome)}-hint`} className="text-xs text-ink-soft">
              One per line, as the outcome form offers them.
            </p>
            <FieldError state={state} name={reasonsField(outcome)} id={`settings-${reasonsField(outcome)}-error`} />
          </div>
        ))}
      </div>
    </FormShell>
  );
}

export interface CostFormValues {
  recoveryByChannel: Record<string, string>;
  fixedCostPerFraud: string;
  reviewCostPerMinute: string;
}

export function CostSettingsForm({ saved, channels, currency, readOnly }: { saved: CostFormValues; channels: string[]; currency: string; readOnly: boolean }) {
  const [state, action] = useSettingsForm(saveCostSettingsAction, "The cost settings were not saved.");
  return (
    <FormShell
      title="Costs"
      id="cost-settings-heading"
      state={state}
      action={action}
      readOnly={readOnly}
      readOnlyNote="Admins change these; your role can read them."
      submitLabel="Save cost settings"
    >
      <p className="text-sm text-ink-soft">
        Exposure = amount × (1 − recovery rate of the channel) + fixed cost of a confirmed fraud. Expected loss = probability × exposure. Review cost =
        handling minutes × cost per minute.
      </p>
      <div className="grid gap-3 sm:grid-cols-3">
        {channels.map((channel) => (
          <Field
            key={channel}
            state={state}
            name={recoveryField(channel)}
            label={`Recovery rate, ${channel.replaceAll("_", " ")}`}
            unit="%"
            saved={saved.recoveryByChannel[channel] ?? "0"}
          />
        ))}
      </div>
      <div className="grid gap-3 sm:grid-cols-3">
        <Field state={state} name="fixedCostPerFraud" label="Fixed cost of a confirmed fraud" unit={currency} saved={saved.fixedCostPerFraud} hint="Card reissue, handling." />
        <Field state={state} name="reviewCostPerMinute" label="Review cost per minute" unit={currency} saved={saved.reviewCostPerMinute} />
      </div>
    </FormShell>
  );
}

export interface CalibrationFormValues {
  minLabels: string;
  minPerClass: string;
  refitAfterNewOutcomes: string;
}

export function CalibrationSettingsForm({ saved, readOnly }: { saved: CalibrationFormValues; readOnly: boolean }) {
  const [state, action] = useSettingsForm(saveCalibrationSettingsAction, "The calibration settings were not saved.");
  return (
    <FormShell
      title="Calibration"
      id="calibration-settings-heading"
      state={state}
      action={action}
      readOnly={readOnly}
      readOnlyNote="Supervisors and admins change these; your role can read them."
      submitLabel="Save calibration settings"
    >
      <p className="text-sm text-ink-soft">
        A model version&apos;s probabilities come from its own reviewed outcomes once it has enough of them; until then its alerts show as uncalibrated.
      </p>
      <div className="grid gap-3 sm:grid-cols-3">
        <Field state={state} name="minLabels" label="Outcomes needed" inputMode="numeric" saved={saved.minLabels} hint="Confirmed fraud plus legitimate." />
        <Field state={state} name="minPerClass" label="Of each kind at least" inputMode="numeric" saved={saved.minPerClass} />
        <Field state={state} name="refitAfterNewOutcomes" label="Refit after new outcomes" inputMode="numeric" saved={saved.refitAfterNewOutcomes} />
      </div>
    </FormShell>
  );
}

export function RefitButton({ modelVersionId, label }: { modelVersionId: string; label: string }) {
  const [state, action] = useActionState(guardAction(refitCalibrationAction, "The calibration was not refitted."), idleFormState);
  return (
    <form action={action} className="flex flex-col items-start gap-1">
      <input type="hidden" name="modelVersionId" value={modelVersionId} />
      <SubmitButton className="btn px-2 py-0.5 text-xs" pendingLabel="Refitting…">
        Refit calibration<span className="sr-only"> of {label}</span>
      </SubmitButton>
      <FormMessage state={state} />
    </form>
  );
}
