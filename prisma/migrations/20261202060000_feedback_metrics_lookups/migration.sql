-- Feedback-loop metrics (lib/feedback) look up, for each alert of a window, its latest chargeback or
-- customer report: the ground truth that overrides the analyst's outcome. labels_alert_idx holds every
-- source and only observed_at, so each lookup filtered out analyst labels and sorted the rest; this
-- partial index gives the latest external label of an alert as its first entry, and lets
-- DISTINCT ON (alert_id) read external labels in order without a sort.
CREATE INDEX labels_external_latest_idx ON labels (alert_id, observed_at DESC, received_at DESC, id DESC)
  WHERE source IN ('chargeback', 'customer_report') AND alert_id IS NOT NULL;
