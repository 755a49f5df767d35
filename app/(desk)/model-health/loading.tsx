export default function ModelHealthLoading() {
  return (
    <section aria-labelledby="model-health-loading-heading" className="space-y-3">
      <h1 id="model-health-loading-heading" className="text-lg font-semibold">
        Model health
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Counting outcomes and labels for the window…
      </p>
      <div className="grid gap-4 lg:grid-cols-2" aria-hidden>
        <div className="panel h-96 animate-pulse bg-paper" />
        <div className="panel h-96 animate-pulse bg-paper" />
      </div>
    </section>
  );
}
