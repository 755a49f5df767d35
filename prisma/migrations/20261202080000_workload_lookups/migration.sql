-- The Workload screen (lib/workload/get-workload.ts) counts the open alerts several ways at every
-- load: by age band, expected-loss band, state and currency; by hour of age; and the due times of
-- those due within the next hours. The existing partial indexes each hold one state; this one holds
-- every alert that is not closed, with the columns those counts read, so each of them is an
-- index-only scan over the open alerts (thousands) rather than a walk of the whole history (millions).
-- Writes pay little: an alert enters it on arrival and leaves it once, when it is closed.
CREATE INDEX alerts_open_received_idx ON alerts (received_at)
  INCLUDE (state, due_at, expected_loss_minor, currency)
  WHERE state <> 'closed';
