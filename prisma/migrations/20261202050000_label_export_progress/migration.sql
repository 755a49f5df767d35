-- Label exports: progress of a running export and the size of the finished file, so the screen can
-- show "n of N rows", tell a stalled export (its server stopped) from a slow one, and the download
-- can announce its length. An export streamed by the API keeps no file: its file_name stays null.
ALTER TABLE label_exports
  ADD COLUMN expected_row_count integer CHECK (expected_row_count >= 0),
  ADD COLUMN progress_at timestamptz,
  ADD COLUMN file_bytes bigint CHECK (file_bytes >= 0),
  -- A finished export (done or failed) says when it finished.
  ADD CONSTRAINT label_exports_finished_check CHECK (status = 'running' OR finished_at IS NOT NULL);

CREATE INDEX label_exports_requested_idx ON label_exports (requested_at DESC);

-- The export selects alerts by model version and a range of occurred_at (lib/exports/stream-label-export.ts).
CREATE INDEX alerts_model_version_occurred_idx ON alerts (model_version_id, occurred_at);
