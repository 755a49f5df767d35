-- Model health reads a version's alerts over its window (and, for drift, its reference and current
-- windows, five weeks by default) through the per-version received index. Those reads were a bitmap
-- heap scan of the window's rows for the metrics and a sequential scan of the whole alerts table
-- for drift (half a second at 1,000,000 alerts, npm run bench -- --scale 1000000 --explain). With
-- every column they read INCLUDEd, both are index-only range reads of pages vacuum has marked
-- all-visible (the older part of any window). Same name and key as before (20261202081000).
DROP INDEX alerts_model_version_received_idx;
CREATE INDEX alerts_model_version_received_idx ON alerts (model_version_id, received_at)
  INCLUDE (score, below_the_line, inclusion_probability, exposure_minor, currency, id,
           state, final_outcome, probability, calibrated, priority);
