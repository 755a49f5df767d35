-- "Take next" hands out overdue alerts first, then by priority (DESIGN.md §4). Whether an alert is
-- overdue depends on the clock, and no index can hold `due_at <= now()`. Walking the priority index
-- and filtering on due_at is fast only when overdue alerts rank high; measured on 200,000 waiting
-- alerts whose 1% overdue ones were the low-expected-loss ones (the usual case: low bands have the
-- longest SLA), that walk removed 197,974 rows per claim.
--
-- So the queue keeps its own copy of "overdue": `past_due` is set by lib/queue/mark-overdue-alerts.ts
-- (before every claim and every listing, for the alerts whose due time has just passed) and by the
-- recompute after a calibration refit or a settings change. Take-next is then the first unlocked
-- entry of one partial index, however many alerts wait.
ALTER TABLE alerts ADD COLUMN past_due boolean NOT NULL DEFAULT false;
ALTER TABLE alerts ADD CONSTRAINT alerts_past_due_needs_due_at CHECK (NOT past_due OR due_at IS NOT NULL);

-- The queue order itself: overdue first, then priority, then older, then id.
CREATE INDEX alerts_waiting_queue_idx ON alerts (past_due DESC, priority DESC NULLS LAST, received_at, id) WHERE state = 'waiting';
-- What the overdue sweep reads: only alerts not yet marked, so a sweep with nothing to do is one
-- index probe, however many marked ones wait.
CREATE INDEX alerts_waiting_unmarked_due_idx ON alerts (due_at) WHERE state = 'waiting' AND NOT past_due;

-- Calibration reads the labelled alerts of one model version (fit, and "how many new outcomes since
-- the last map" after each outcome); without this it walks every alert of the version.
CREATE INDEX alerts_labelled_by_version_idx ON alerts (model_version_id, closed_at)
  WHERE state = 'closed' AND final_outcome IN ('confirmed_fraud', 'legitimate');
