-- The capacity planner (lib/workload/plan-capacity.ts) reads the last days of each model version's
-- alerts: score, exposure, below-the-line flag, inclusion probability, currency. Through the plain
-- (model_version_id, received_at) index that meant a heap fetch per alert, so the planner chose a
-- sequential scan of the whole history instead. The same index with those columns INCLUDEd lets it
-- read only the window, index-only. It keeps its name and key, so everything that used it (per-version
-- range scans in calibration and the workload history) still does; only its entries grow.
DROP INDEX alerts_model_version_received_idx;
CREATE INDEX alerts_model_version_received_idx ON alerts (model_version_id, received_at)
  INCLUDE (score, below_the_line, inclusion_probability, exposure_minor, currency);
