export default function CapacityPlannerLoading() {
  return (
    <section aria-labelledby="capacity-loading-heading" className="space-y-3">
      <h1 id="capacity-loading-heading" className="text-lg font-semibold">
        Capacity planner
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Reading the last days of traffic…
      </p>
      <div className="panel h-48 animate-pulse bg-paper" aria-hidden />
    </section>
  );
}
