"use client";
// A supervisor's controls on one analyst's row: release everything they hold, or move one held alert
// to someone else. Each asks for a confirmation first; only the confirmation form sends confirm=yes,
// and the server refuses a request without it.
import { createContext, use, useActionState, useState, type ReactNode } from "react";
import { idleFormState, type FormState } from "@/lib/http/form-state";
import { FormMessage, SubmitButton } from "@/app/components/form-parts";
import { reassignAlertAction, releaseAnalystAlertsAction } from "@/app/(desk)/workload/actions";

// A finished action moves or removes the row it was started from (the page is revalidated), so its
// outcome is announced above the table, by a provider that stays mounted across the re-render.
const NoticeContext = createContext<(state: FormState<never>) => void>(() => undefined);

export function ActionNotices({ children }: { children: ReactNode }) {
  const [notice, setNotice] = useState<FormState<never> | null>(null);
  return (
    <NoticeContext value={setNotice}>
      {notice && (
        <div className="flex items-start gap-2">
          <div className="flex-1">
            <FormMessage state={notice} />
          </div>
          <button type="button" className="btn px-2 py-0.5 text-xs" onClick={() => setNotice(null)}>
            Dismiss
          </button>
        </div>
      )}
      {children}
    </NoticeContext>
  );
}

export interface HeldAlertView {
  alertId: string;
  externalId: string;
  heldFor: string;
}

export interface AssigneeView {
  userId: string;
  displayName: string;
  heldCount: number;
}

export function ReleaseAllControl({ analystId, analystName, held }: { analystId: string; analystName: string; held: HeldAlertView[] }) {
  const [confirming, setConfirming] = useState(false);
  const notify = use(NoticeContext);
  const [state, action] = useActionState(async (previous: FormState<never>, formData: FormData) => {
    const next = await releaseAnalystAlertsAction(previous, formData);
    if (next.status !== "ok") return next;
    setConfirming(false);
    notify(next);
    return idleFormState;
  }, idleFormState);
  const count = held.length;
  return (
    <div className="space-y-1">
      {count > 0 && !confirming && (
        <button type="button" className="btn px-2 py-0.5 text-xs" onClick={() => setConfirming(true)}>
          Release all ({count})…<span className="sr-only"> alerts held by {analystName}</span>
        </button>
      )}
      {count > 0 && confirming && (
        <form action={action} className="space-y-1 rounded border border-attention/40 bg-attention-wash p-2" aria-label={`Confirm releasing ${analystName}'s alerts`}>
          <p className="text-xs">
            Put {count === 1 ? "the alert" : `all ${count} alerts`} {analystName} holds ({held.map((alert) => alert.externalId).join(", ")}) back in the queue? Anyone
            can then claim {count === 1 ? "it" : "them"}; work not yet recorded is lost.
          </p>
          <input type="hidden" name="analystId" value={analystId} />
          <input type="hidden" name="confirm" value="yes" />
          <label className="flex flex-col gap-0.5 text-xs">
            Reason (recorded in the audit trail)
            <input name="reason" type="text" maxLength={200} defaultValue={state.values.reason ?? "shift ended"} className="field py-0.5 text-xs" />
          </label>
          <div className="flex gap-2">
            <SubmitButton className="btn btn-primary px-2 py-0.5 text-xs" pendingLabel="Releasing…">
              Confirm release
            </SubmitButton>
            <button type="button" className="btn px-2 py-0.5 text-xs" onClick={() => setConfirming(false)}>
              Cancel
            </button>
          </div>
        </form>
      )}
      <FormMessage state={state} />
    </div>
  );
}

export function ReassignControl({
  alert,
  holderId,
  holderName,
  assignees,
  maxHeld,
  leaseMinutes,
}: {
  alert: HeldAlertView;
  holderId: string;
  holderName: string;
  assignees: AssigneeView[];
  maxHeld: number;
  leaseMinutes: number;
}) {
  const candidates = assignees.filter((person) => person.userId !== holderId);
  const firstFree = candidates.find((person) => person.heldCount < maxHeld)?.userId ?? "";
  const [target, setTarget] = useState(firstFree);
  const [confirming, setConfirming] = useState(false);
  const notify = use(NoticeContext);
  const [state, action] = useActionState(async (previous: FormState<never>, formData: FormData) => {
    const next = await reassignAlertAction(previous, formData);
    if (next.status !== "ok") return next;
    setConfirming(false);
    notify(next);
    return idleFormState;
  }, idleFormState);
  const targetName = candidates.find((person) => person.userId === target)?.displayName ?? "";
  const selectId = `reassign-${alert.alertId}`;
  if (candidates.length === 0) return <span className="text-xs text-ink-faint">nobody else can take it</span>;
  return (
    <div className="space-y-1">
      {!confirming ? (
        <div className="flex items-center gap-1">
          <label htmlFor={selectId} className="sr-only">
            Move alert {alert.externalId} to
          </label>
          <select id={selectId} value={target} onChange={(event) => setTarget(event.target.value)} className="field py-0.5 text-xs">
            <option value="" disabled>
              Move to…
            </option>
            {candidates.map((person) => (
              <option key={person.userId} value={person.userId} disabled={person.heldCount >= maxHeld}>
                {person.displayName} ({person.heldCount}/{maxHeld} held)
              </option>
            ))}
          </select>
          <button type="button" className="btn px-2 py-0.5 text-xs" disabled={target === ""} onClick={() => setConfirming(true)}>
            Reassign…<span className="sr-only"> alert {alert.externalId}</span>
          </button>
        </div>
      ) : (
        <form action={action} className="space-y-1 rounded border border-attention/40 bg-attention-wash p-2" aria-label={`Confirm moving alert ${alert.externalId}`}>
          <p className="text-xs">
            Move {alert.externalId} from {holderName} to {targetName}? {targetName} gets a fresh {leaseMinutes}-minute lease, and {holderName} can no longer record an
            outcome on it.
          </p>
          <input type="hidden" name="alertId" value={alert.alertId} />
          <input type="hidden" name="toUserId" value={target} />
          <input type="hidden" name="confirm" value="yes" />
          <div className="flex gap-2">
            <SubmitButton className="btn btn-primary px-2 py-0.5 text-xs" pendingLabel="Moving…">
              Confirm move
            </SubmitButton>
            <button type="button" className="btn px-2 py-0.5 text-xs" onClick={() => setConfirming(false)}>
              Cancel
            </button>
          </div>
        </form>
      )}
      <FormMessage state={state} />
    </div>
  );
}
