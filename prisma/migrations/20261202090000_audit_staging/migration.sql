-- Staged audit events: the events of the hottest write, taking an alert, are written here in the
-- same transaction as the change (so the change and its record still commit or roll back together)
-- and linked into the hash chain right after commit by lib/audit/chain-staged-audit-events.ts.
-- Appending to the chain directly serialises every writer on one lock held until commit; with
-- sixteen analysts taking alerts at once that turned a 15 ms claim into 1.6 s at the 95th percentile.
--
-- A staged event is in no chain yet, so nothing here is tamper-evident: rows stay for milliseconds,
-- every reader of the trail (verify, the Audit trail screen, its export, an alert's history) links
-- what is staged before it reads, and only the chainer deletes from this table.
CREATE TABLE audit_events_staged (
  id              bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  -- Millisecond precision: the value must survive the round trip through JavaScript's Date unchanged.
  occurred_at     timestamptz NOT NULL DEFAULT date_trunc('milliseconds', clock_timestamp()),
  actor_type      text NOT NULL CHECK (actor_type IN ('user', 'api_client', 'system')),
  actor_id        text,
  actor_label     text NOT NULL,
  action          text NOT NULL CHECK (action ~ '^[a-z_]+\.[a-z_]+$'),
  subject_type    text,
  subject_id      text,
  payload         jsonb NOT NULL DEFAULT '{}'::jsonb,
  request_id      text,
  ip_address      text
);
