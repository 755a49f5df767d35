"use client";
// The forms an analyst works an alert with: the outcome (first review), the second review under
// the four-eyes rule, release back to the queue, and taking a waiting alert. The outcome, reason and
// note are controlled, so a refused or unsent submit keeps them; the note is also kept as a draft in
// this tab's sessionStorage until the outcome is saved, so a reload does not lose it either.
import { startTransition, useActionState, useState, useSyncExternalStore, type FormEvent } from "react";
import { claimAlertAction, recordOutcomeAction, recordSecondReviewAction, releaseAlertAction } from "@/app/(desk)/alerts/[id]/actions";
import { guardAction } from "@/app/components/guard-action";
import { FieldError, FormMessage } from "@/app/components/form-parts";
import { idleFormState, type FormState } from "@/lib/http/form-state";
import { OUTCOMES, outcomeLabels, type OutcomeValue } from "@/lib/outcomes/schemas";
import { CLAIM_FORM_ID, NOTE_FIELD_ID, OUTCOME_FORM_ID, outcomeFieldId, outcomeKeys, RELEASE_FORM_ID } from "@/app/(desk)/alerts/[id]/form-ids";


const NOT_SAVED = "The outcome was NOT saved.";
const draftKey = (alertId: string) => `triage-desk:note:${alertId}`;
const noSubscription = () => () => undefined;

function readDraft(alertId: string): string {
  try {
    return window.sessionStorage.getItem(draftKey(alertId)) ?? "";
  } catch {
    return "";
  }
}

function writeDraft(alertId: string, note: string | null): void {
  try {
    if (note) window.sessionStorage.setItem(draftKey(alertId), note);
    else window.sessionStorage.removeItem(draftKey(alertId));
  } catch {
    // Storage may be off (private mode); the note still lives in the form.
  }
}

type FormServerAction = (previous: FormState<never>, formData: FormData) => Promise<FormState<never>>;

/** The guarded action, which also forgets the note's draft once the outcome is saved. */
function savingAction(action: FormServerAction, alertId: string): FormServerAction {
  const guarded = guardAction(action, NOT_SAVED);
  return async (previous, formData) => {
    const result = await guarded(previous, formData);
    if (result.status === "ok") writeDraft(alertId, null);
    return result;
  };
}

/**
 * Submits through onSubmit rather than <form action>: React resets a form after an action passed as
 * `action`, and a reset unchecks a controlled radio without telling React, so a refused submit would
 * lose the chosen outcome.
 */
function submitWithoutReset(dispatch: (formData: FormData) => void) {
  return (event: FormEvent<HTMLFormElement>) => {
    event.preventDefault();
    const formData = new FormData(event.currentTarget);
    startTransition(() => dispatch(formData));
  };
}

/** The note with its draft: the server renders it empty, the browser fills in this tab's draft. */
function useNote(alertId: string): [string, (note: string) => void] {
  const draft = useSyncExternalStore(noSubscription, () => readDraft(alertId), () => "");
  const [edited, setEdited] = useState<string | null>(null);
  const setNote = (note: string) => {
    setEdited(note);
    writeDraft(alertId, note);
  };
  return [edited ?? draft, setNote];
}

interface OutcomeFieldsProps {
  alertId: string;
  reasons: Record<OutcomeValue, string[]>;
  state: FormState<never>;
  outcome: OutcomeValue | null;
  onOutcome: (outcome: OutcomeValue) => void;
  labelOf: (outcome: OutcomeValue) => string;
  legend: string;
}

function OutcomeFields({ alertId, reasons, state, outcome, onOutcome, labelOf, legend }: OutcomeFieldsProps) {
  const [reasonByOutcome, setReasonByOutcome] = useState<Record<OutcomeValue, string>>(() => ({
    confirmed_fraud: reasons.confirmed_fraud[0],
    legitimate: reasons.legitimate[0],
    inconclusive: reasons.inconclusive[0],
  }));
  const [note, setNote] = useNote(alertId);
  return (
    <>
      <input type="hidden" name="alertId" value={alertId} />
      <fieldset className="space-y-1" aria-describedby={state.fieldErrors.outcome ? "outcome-error" : undefined}>
        <legend className="mb-1 text-sm font-medium">{legend}</legend>
        {OUTCOMES.map((value) => (
          <label key={value} htmlFor={outcomeFieldId(value)} className="flex cursor-pointer items-center gap-2 rounded px-2 py-1 text-sm has-[:checked]:bg-accent-wash">
            <input
              id={outcomeFieldId(value)}
              type="radio"
              name="outcome"
              value={value}
              checked={outcome === value}
              onChange={() => onOutcome(value)}
              aria-keyshortcuts={outcomeKeys[value]}
            />
            <span className="flex-1">{labelOf(value)}</span>
            <kbd className="kbd">{outcomeKeys[value]}</kbd>
          </label>
        ))}
        <FieldError state={state} name="outcome" id="outcome-error" />
      </fieldset>
      <div className="flex flex-col gap-1">
        <label htmlFor="outcome-reason" className="text-sm font-medium">
          Reason
        </label>
        {outcome ? (
          <select
            id="outcome-reason"
            name="reason"
            className="field"
            value={reasonByOutcome[outcome]}
            onChange={(event) => setReasonByOutcome((current) => ({ ...current, [outcome]: event.target.value }))}
            aria-describedby={state.fieldErrors.reason ? "reason-error" : undefined}
          >
            {reasons[outcome].map((reason) => (
              <option key={reason} value={reason}>
                {reason}
              </option>
            ))}
          </select>
        ) : (
          <select id="outcome-reason" className="field" disabled>
            <option>Choose an outcome first</option>
          </select>
        )}
        <FieldError state={state} name="reason" id="reason-error" />
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor={NOTE_FIELD_ID} className="flex items-center gap-2 text-sm font-medium">
          Note <span className="font-normal text-ink-soft">(optional unless the reason says so)</span>
          <kbd className="kbd ml-auto">n</kbd>
        </label>
        <textarea
          id={NOTE_FIELD_ID}
          name="note"
          rows={4}
          maxLength={4000}
          className="field"
          value={note}
          onChange={(event) => setNote(event.target.value)}
          aria-keyshortcuts="n"
          aria-describedby={state.fieldErrors.note ? "note-error" : undefined}
        />
        <FieldError state={state} name="note" id="note-error" />
      </div>
    </>
  );
}

function SubmitRow({ pending, label }: { pending: boolean; label: string }) {
  return (
    <button type="submit" className="btn btn-primary w-full justify-center" disabled={pending} aria-disabled={pending} aria-keyshortcuts="Control+Enter">
      {pending ? "Saving…" : label} <kbd className="kbd border-accent-strong bg-accent-wash">Ctrl+Enter</kbd>
    </button>
  );
}

export function OutcomeForm({ alertId, reasons, fourEyesNote }: { alertId: string; reasons: Record<OutcomeValue, string[]>; fourEyesNote: string | null }) {
  const [action] = useState(() => savingAction(recordOutcomeAction, alertId));
  const [state, dispatch, pending] = useActionState(action, idleFormState);
  const [outcome, setOutcome] = useState<OutcomeValue | null>(null);
  const [askSecond, setAskSecond] = useState(false);
  return (
    <form id={OUTCOME_FORM_ID} onSubmit={submitWithoutReset(dispatch)} className="space-y-3" aria-labelledby="outcome-heading" noValidate>
      <h2 id="outcome-heading" className="text-sm font-semibold">
        Record the outcome
      </h2>
      <FormMessage state={state} />
      <OutcomeFields alertId={alertId} reasons={reasons} state={state} outcome={outcome} onOutcome={setOutcome} labelOf={(value) => outcomeLabels[value]} legend="Outcome" />
      {fourEyesNote && outcome === "legitimate" && (
        <p className="rounded border border-attention/40 bg-attention-wash px-3 py-2 text-xs text-attention" role="note">
          {fourEyesNote}
        </p>
      )}
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" name="requestSecondReview" checked={askSecond} onChange={(event) => setAskSecond(event.target.checked)} />
        Send to a second person for review
      </label>
      <SubmitRow pending={pending} label="Record outcome" />
    </form>
  );
}

export function SecondReviewForm({
  alertId,
  reasons,
  firstOutcome,
  startedAt,
}: {
  alertId: string;
  reasons: Record<OutcomeValue, string[]>;
  firstOutcome: OutcomeValue;
  startedAt: string;
}) {
  const [action] = useState(() => savingAction(recordSecondReviewAction, alertId));
  const [state, dispatch, pending] = useActionState(action, idleFormState);
  const [outcome, setOutcome] = useState<OutcomeValue | null>(null);
  return (
    <form id={OUTCOME_FORM_ID} onSubmit={submitWithoutReset(dispatch)} className="space-y-3" aria-labelledby="second-review-heading" noValidate>
      <h2 id="second-review-heading" className="text-sm font-semibold">
        Second review
      </h2>
      <FormMessage state={state} />
      <input type="hidden" name="startedAt" value={startedAt} />
      <OutcomeFields
        alertId={alertId}
        reasons={reasons}
        state={state}
        outcome={outcome}
        onOutcome={setOutcome}
        labelOf={(value) => (value === firstOutcome ? `Confirm: ${outcomeLabels[value]}` : `Overturn: ${outcomeLabels[value]}`)}
        legend="Your outcome"
      />
      <SubmitRow pending={pending} label="Record second review" />
    </form>
  );
}

export function ReleaseForm({ alertId }: { alertId: string }) {
  const [action] = useState(() => guardAction(releaseAlertAction, "The alert was NOT released."));
  const [state, formAction, pending] = useActionState(action, idleFormState);
  return (
    <form id={RELEASE_FORM_ID} action={formAction} className="space-y-2">
      <input type="hidden" name="alertId" value={alertId} />
      <FormMessage state={state} />
      <button type="submit" className="btn w-full justify-center" disabled={pending} aria-keyshortcuts="r">
        {pending ? "Releasing…" : "Release back to the queue"} <kbd className="kbd">r</kbd>
      </button>
    </form>
  );
}

export function ClaimForm({ alertId }: { alertId: string }) {
  const [action] = useState(() => guardAction(claimAlertAction, "The alert was NOT taken."));
  const [state, formAction, pending] = useActionState(action, idleFormState);
  return (
    <form id={CLAIM_FORM_ID} action={formAction} className="space-y-2">
      <input type="hidden" name="alertId" value={alertId} />
      <FormMessage state={state} />
      <button type="submit" className="btn btn-primary w-full justify-center" disabled={pending} aria-keyshortcuts="c">
        {pending ? "Taking…" : "Take this alert"} <kbd className="kbd border-accent-strong bg-accent-wash">c</kbd>
      </button>
    </form>
  );
}
