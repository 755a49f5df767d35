export default function AlertLoading() {
  return (
    <div className="space-y-4" aria-busy="true">
      <p role="status" className="text-sm text-ink-soft">
        Loading the alert…
      </p>
      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="panel h-64 animate-pulse" />
        <div className="panel h-64 animate-pulse" />
      </div>
    </div>
  );
}
