export default function IngestLogLoading() {
  return (
    <section aria-labelledby="ingest-loading-heading" className="space-y-3">
      <h1 id="ingest-loading-heading" className="text-lg font-semibold">
        Ingest log
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Loading the ingest log…
      </p>
      <div className="panel h-48 animate-pulse bg-paper" aria-hidden />
    </section>
  );
}
