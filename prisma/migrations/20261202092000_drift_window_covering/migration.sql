-- The drift part of Model health reads a version's scores over its reference and current windows
-- (five weeks by default), keyed and sampled by alert id. Without the id in the per-version received
-- index that read was a sequential scan of the whole alerts table on every view (half a second at
-- 1,000,000 alerts, npm run bench -- --scale 1000000 --explain); with it, an index-only range read.
-- Same name and key as before (migration 20261202081000), one more INCLUDEd column.
DROP INDEX alerts_model_version_received_idx;
CREATE INDEX alerts_model_version_received_idx ON alerts (model_version_id, received_at)
  INCLUDE (score, below_the_line, inclusion_probability, exposure_minor, currency, id);
