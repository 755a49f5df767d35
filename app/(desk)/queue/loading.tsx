export default function QueueLoading() {
  return (
    <div className="space-y-4" aria-busy="true">
      <p role="status" className="text-sm text-ink-soft">
        Loading the queue…
      </p>
      <div className="panel h-24 animate-pulse" />
      <div className="panel h-96 animate-pulse" />
    </div>
  );
}
