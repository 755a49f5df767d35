export default function WorkloadLoading() {
  return (
    <section aria-labelledby="workload-loading-heading" className="space-y-3">
      <h1 id="workload-loading-heading" className="text-lg font-semibold">
        Workload
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Counting the open alerts…
      </p>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-5" aria-hidden>
        {Array.from({ length: 5 }, (_, i) => (
          <div key={i} className="panel h-20 animate-pulse bg-paper" />
        ))}
      </div>
      <div className="panel h-48 animate-pulse bg-paper" aria-hidden />
    </section>
  );
}
