"use client";
// Unexpected failures only: expected ones (someone else took the alert, it is closed) are answered
// inside the forms. The server logged the error with its digest; the digest lets support find it.
import Link from "next/link";

export default function AlertError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <section aria-labelledby="alert-error-heading" className="panel mx-auto mt-8 max-w-lg space-y-3 p-6">
      <h1 id="alert-error-heading" className="text-lg font-semibold">
        This alert could not be shown
      </h1>
      <p className="text-sm text-ink-soft">
        Something went wrong on our side. Nothing you typed was saved unless the page said so.
        {error.digest ? ` If it happens again, report reference ${error.digest}.` : ""}
      </p>
      <div className="flex gap-3">
        <button type="button" className="btn btn-primary" onClick={reset}>
          Try again
        </button>
        <Link href="/queue" className="btn">
          Back to the queue
        </Link>
      </div>
    </section>
  );
}
