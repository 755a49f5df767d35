import Link from "next/link";

export default function AlertNotFound() {
  return (
    <section aria-labelledby="missing-heading" className="panel mx-auto mt-8 max-w-lg space-y-3 p-6">
      <h1 id="missing-heading" className="text-lg font-semibold">
        No such alert
      </h1>
      <p className="text-sm text-ink-soft">The link may be mistyped, or the alert belongs to another installation.</p>
      <p className="text-sm">
        <Link href="/queue" className="text-accent underline">
          Back to the queue
        </Link>
      </p>
    </section>
  );
}
