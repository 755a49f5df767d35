-- Precision at k (Model health) takes the k highest-priority alerts of each model version and UTC day.
-- Ranking every alert of the window for it was a sort of the whole window, a quarter of the
-- model-version metrics statement at 100,000 alerts (npm run bench -- --explain). With this index each
-- (version, day) is one index range read in queue-priority order, stopped after k entries.
CREATE INDEX alerts_daily_priority_idx
  ON alerts (model_version_id, ((received_at AT TIME ZONE 'UTC')::date), priority DESC NULLS LAST, received_at, id)
  WHERE NOT below_the_line;
