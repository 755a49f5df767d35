"use client";
// The "Take next" button: claims the alert the queue puts first and opens it. Also on the Alert
// page after an outcome, so an analyst can go from one alert to the next without the mouse.
import { useActionState } from "react";
import { takeNextAction } from "@/app/(desk)/queue/actions";
import { guardAction } from "@/app/components/guard-action";
import { FormMessage } from "@/app/components/form-parts";
import { idleFormState } from "@/lib/http/form-state";
import { TAKE_NEXT_FORM_ID } from "@/app/(desk)/alerts/[id]/form-ids";

const guardedTakeNext = guardAction(takeNextAction, "No alert was taken.");

export function TakeNext({ size = "large" }: { size?: "large" | "small" }) {
  const [state, action, pending] = useActionState(guardedTakeNext, idleFormState);
  return (
    <div className="space-y-2">
      <form id={TAKE_NEXT_FORM_ID} action={action}>
        <button
          type="submit"
          className={`btn btn-primary ${size === "large" ? "px-5 py-2.5 text-base" : ""}`}
          disabled={pending}
          aria-disabled={pending}
          aria-keyshortcuts="t"
        >
          {pending ? "Taking the next alert…" : "Take next"} <kbd className="kbd border-accent-strong bg-accent-wash">t</kbd>
        </button>
      </form>
      <FormMessage state={state} />
    </div>
  );
}
