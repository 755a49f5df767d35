"use client";
// For forms whose outcome matters (recording an outcome, taking an alert): when the server cannot
// be reached — the connection dropped, the server restarted, the page is from an older build — the
// form must say plainly that nothing was saved instead of falling over into the error page, and
// keep what the person typed. Redirects and other navigation signals pass through unchanged.
import { unstable_rethrow } from "next/navigation";
import type { FormState } from "@/lib/http/form-state";

type FormServerAction<Data> = (previous: FormState<Data>, formData: FormData) => Promise<FormState<Data>>;

export function guardAction<Data>(action: FormServerAction<Data>, notSaved: string): FormServerAction<Data> {
  return async (previous, formData) => {
    try {
      return await action(previous, formData);
    } catch (error) {
      unstable_rethrow(error);
      const offline = typeof navigator !== "undefined" && navigator.onLine === false;
      return {
        status: "error",
        message: offline ? `${notSaved} Your device is offline; check the connection, then submit again.` : `${notSaved} The server could not be reached; check the connection and submit again, or reload the page.`,
        fieldErrors: {},
        values: previous.values,
      };
    }
  };
}
