export default function ReviewerQualityLoading() {
  return (
    <section aria-labelledby="reviewer-quality-loading-heading" className="space-y-3">
      <h1 id="reviewer-quality-loading-heading" className="text-lg font-semibold">
        Reviewer quality
      </h1>
      <p role="status" className="text-sm text-ink-soft">
        Counting reviews, late labels and second opinions for the window…
      </p>
      <div className="panel h-64 animate-pulse bg-paper" aria-hidden />
    </section>
  );
}
