// Element ids that the keyboard shortcuts act on, shared by the server page and the client forms
// (a "use client" module's exports are references on the server, so they cannot live there).
import type { OutcomeValue } from "@/lib/outcomes/schemas";

export const OUTCOME_FORM_ID = "outcome-form";
export const NOTE_FIELD_ID = "outcome-note";
export const RELEASE_FORM_ID = "release-form";
export const CLAIM_FORM_ID = "claim-form";
export const TAKE_NEXT_FORM_ID = "take-next-form";
export const outcomeFieldId = (outcome: OutcomeValue) => `outcome-${outcome}`;
export const outcomeKeys: Record<OutcomeValue, string> = { confirmed_fraud: "f", legitimate: "l", inconclusive: "i" };
