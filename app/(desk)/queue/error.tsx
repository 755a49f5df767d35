"use client";
import Link from "next/link";

export default function QueueError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <section aria-labelledby="queue-error-heading" className="panel mx-auto mt-8 max-w-lg space-y-3 p-6">
      <h1 id="queue-error-heading" className="text-lg font-semibold">
        The queue could not be shown
      </h1>
      <p className="text-sm text-ink-soft">
        Something went wrong on our side; no alert was taken or changed.
        {error.digest ? ` If it happens again, report reference ${error.digest}.` : ""}
      </p>
      <div className="flex gap-3">
        <button type="button" className="btn btn-primary" onClick={reset}>
          Try again
        </button>
        <Link href="/queue" className="btn">
          Reload the queue
        </Link>
      </div>
    </section>
  );
}
