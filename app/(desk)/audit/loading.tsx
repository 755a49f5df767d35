export default function AuditLoading() {
  return (
    <section aria-labelledby="audit-loading-heading" className="space-y-3">
      <h1 id="audit-loading-heading" className="text-lg font-semibold">
        Audit trail
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Loading the audit trail…
      </p>
      <div className="panel h-48 animate-pulse bg-paper" aria-hidden />
    </section>
  );
}
