-- Triage Desk core model. Invariants live here, in SQL: states and scores are CHECKed,
-- ingest is idempotent through unique keys, the open queue has partial indexes, and the
-- audit log is append-only (triggers at the end of this file).

CREATE TABLE users (
  id              uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  email           text NOT NULL UNIQUE CHECK (email = lower(email) AND position('@' in email) > 1),
  display_name    text NOT NULL CHECK (length(display_name) BETWEEN 1 AND 200),
  role            text NOT NULL CHECK (role IN ('analyst', 'supervisor', 'admin', 'auditor')),
  password_hash   text,
  -- Stable pseudonymous id used in label exports instead of names or emails (DESIGN.md §5).
  pseudonym       text NOT NULL UNIQUE DEFAULT ('rv_' || substr(md5(gen_random_uuid()::text), 1, 12)),
  active          boolean NOT NULL DEFAULT true,
  created_at      timestamptz NOT NULL DEFAULT now(),
  updated_at      timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE sessions (
  id              uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  -- Only a SHA-256 of the cookie token is stored: a leaked table does not yield live sessions.
  token_hash      text NOT NULL UNIQUE,
  user_id         uuid NOT NULL REFERENCES users(id),
  created_at      timestamptz NOT NULL DEFAULT now(),
  last_seen_at    timestamptz NOT NULL DEFAULT now(),
  expires_at      timestamptz NOT NULL,
  ended_at        timestamptz,
  ended_reason    text CHECK (ended_reason IN ('sign_out', 'idle_timeout', 'expired', 'deactivated', 'password_changed')),
  ip_address      text,
  user_agent      text
);
CREATE INDEX sessions_user_open_idx ON sessions (user_id) WHERE ended_at IS NULL;

CREATE TABLE sign_in_attempts (
  id              bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  email           text NOT NULL,
  ip_address      text NOT NULL,
  succeeded       boolean NOT NULL,
  attempted_at    timestamptz NOT NULL DEFAULT now()
);
CREATE INDEX sign_in_attempts_email_idx ON sign_in_attempts (email, attempted_at);
CREATE INDEX sign_in_attempts_ip_idx ON sign_in_attempts (ip_address, attempted_at);

CREATE TABLE api_clients (
  id              uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  name            text NOT NULL UNIQUE CHECK (name ~ '^[a-z0-9][a-z0-9._-]{1,62}$'),
  token_hash      text NOT NULL UNIQUE,
  -- The first characters of the token, so a person can tell tokens apart without the secret.
  token_prefix    text NOT NULL,
  scopes          text[] NOT NULL CHECK (
                    cardinality(scopes) > 0 AND
                    scopes <@ ARRAY['alerts:write', 'labels:write', 'outcomes:write', 'metrics:read', 'exports:read']::text[]),
  created_by_id   uuid REFERENCES users(id),
  created_at      timestamptz NOT NULL DEFAULT now(),
  last_used_at    timestamptz,
  revoked_at      timestamptz
);

CREATE TABLE model_versions (
  id                      uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  model_name              text NOT NULL CHECK (length(model_name) BETWEEN 1 AND 100),
  version                 text NOT NULL CHECK (length(version) BETWEEN 1 AND 50),
  score_kind              text NOT NULL CHECK (score_kind IN ('probability', 'anomaly')),
  -- β: the share of genuine (negative) training examples kept when the training set was undersampled.
  negative_sampling_rate  double precision NOT NULL DEFAULT 1 CHECK (negative_sampling_rate > 0 AND negative_sampling_rate <= 1),
  prior_hit_rate          double precision CHECK (prior_hit_rate >= 0 AND prior_hit_rate <= 1),
  alert_threshold         double precision NOT NULL CHECK (alert_threshold <> 'NaN' AND alert_threshold NOT IN ('Infinity', '-Infinity')),
  active                  boolean NOT NULL DEFAULT true,
  created_at              timestamptz NOT NULL DEFAULT now(),
  UNIQUE (model_name, version),
  -- An anomaly score is not a probability: before calibration it needs a prior hit rate.
  CHECK (score_kind = 'probability' OR prior_hit_rate IS NOT NULL)
);

CREATE TABLE calibration_maps (
  id                  uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  model_version_id    uuid NOT NULL REFERENCES model_versions(id),
  fitted_at           timestamptz NOT NULL DEFAULT now(),
  label_count         integer NOT NULL CHECK (label_count > 0),
  positive_count      integer NOT NULL CHECK (positive_count >= 0),
  brier_score         double precision NOT NULL CHECK (brier_score >= 0 AND brier_score <= 1),
  score_points        double precision[] NOT NULL,
  probability_points  double precision[] NOT NULL,
  CHECK (cardinality(score_points) = cardinality(probability_points) AND cardinality(score_points) > 0)
);
CREATE INDEX calibration_maps_version_idx ON calibration_maps (model_version_id, fitted_at DESC);

CREATE TABLE ingest_batches (
  id              uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  kind            text NOT NULL CHECK (kind IN ('alerts', 'labels', 'outcomes')),
  channel         text NOT NULL CHECK (channel IN ('api', 'upload', 'command_line', 'demo')),
  api_client_id   uuid REFERENCES api_clients(id),
  user_id         uuid REFERENCES users(id),
  file_name       text,
  received_at     timestamptz NOT NULL DEFAULT now(),
  row_count       integer NOT NULL DEFAULT 0 CHECK (row_count >= 0),
  accepted        integer NOT NULL DEFAULT 0 CHECK (accepted >= 0),
  duplicate       integer NOT NULL DEFAULT 0 CHECK (duplicate >= 0),
  conflict        integer NOT NULL DEFAULT 0 CHECK (conflict >= 0),
  rejected        integer NOT NULL DEFAULT 0 CHECK (rejected >= 0),
  -- Rejected rows with their reasons; card-number-like values appear only masked.
  errors          jsonb NOT NULL DEFAULT '[]'::jsonb
);
CREATE INDEX ingest_batches_received_idx ON ingest_batches (received_at DESC);

CREATE TABLE alerts (
  id                        uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  -- Kept on every row that would be distributed if one server is outgrown (DESIGN.md §6).
  portfolio_key             text NOT NULL DEFAULT 'default',
  external_id               text NOT NULL CHECK (length(external_id) BETWEEN 1 AND 200),
  ingest_batch_id           uuid REFERENCES ingest_batches(id),
  content_hash              text NOT NULL,
  received_at               timestamptz NOT NULL DEFAULT now(),
  occurred_at               timestamptz NOT NULL,
  amount_minor              bigint NOT NULL CHECK (amount_minor >= 0),
  currency                  char(3) NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
  channel                   text NOT NULL,
  merchant_category_code    char(4) NOT NULL CHECK (merchant_category_code ~ '^[0-9]{4}$'),
  merchant_country          char(2) NOT NULL CHECK (merchant_country ~ '^[A-Z]{2}$'),
  entity_ref                text NOT NULL CHECK (length(entity_ref) BETWEEN 1 AND 100),
  model_version_id          uuid NOT NULL REFERENCES model_versions(id),
  score                     double precision NOT NULL CHECK (score <> 'NaN' AND score NOT IN ('Infinity', '-Infinity')),
  reason_codes              jsonb NOT NULL DEFAULT '[]'::jsonb,
  below_the_line            boolean NOT NULL DEFAULT false,
  inclusion_probability     double precision CHECK (inclusion_probability > 0 AND inclusion_probability <= 1),
  -- Derived by lib/risk on arrival and after a calibration refit.
  probability               double precision CHECK (probability >= 0 AND probability <= 1),
  calibrated                boolean NOT NULL DEFAULT false,
  probability_source        text CHECK (probability_source IN ('calibration_map', 'corrected_score', 'prior_hit_rate')),
  calibration_map_id        uuid REFERENCES calibration_maps(id),
  exposure_minor            bigint CHECK (exposure_minor >= 0),
  expected_loss_minor       bigint CHECK (expected_loss_minor >= 0),
  due_at                    timestamptz,
  priority                  double precision,
  -- Lifecycle.
  state                     text NOT NULL DEFAULT 'waiting' CHECK (state IN ('waiting', 'in_review', 'second_review', 'closed')),
  assigned_to_id            uuid REFERENCES users(id),
  claimed_at                timestamptz,
  lease_expires_at          timestamptz,
  closed_at                 timestamptz,
  final_outcome             text CHECK (final_outcome IN ('confirmed_fraud', 'legitimate', 'inconclusive')),
  UNIQUE (portfolio_key, external_id),
  CHECK (below_the_line = (inclusion_probability IS NOT NULL)),
  CHECK (state <> 'in_review' OR (assigned_to_id IS NOT NULL AND claimed_at IS NOT NULL AND lease_expires_at IS NOT NULL)),
  CHECK (state <> 'closed' OR (closed_at IS NOT NULL AND final_outcome IS NOT NULL)),
  CHECK (state = 'closed' OR final_outcome IS NULL)
);
-- The open queue: only waiting alerts are in these indexes, so they stay small however long
-- the history grows. "Take next" walks the first one in order; overdue alerts are found by the second.
CREATE INDEX alerts_waiting_priority_idx ON alerts (priority DESC NULLS LAST, received_at, id) WHERE state = 'waiting';
CREATE INDEX alerts_waiting_due_idx ON alerts (due_at) WHERE state = 'waiting';
CREATE INDEX alerts_in_review_lease_idx ON alerts (lease_expires_at) WHERE state = 'in_review';
CREATE INDEX alerts_assigned_idx ON alerts (assigned_to_id) WHERE state IN ('in_review', 'second_review');
CREATE INDEX alerts_entity_idx ON alerts (entity_ref, occurred_at DESC);
CREATE INDEX alerts_model_version_received_idx ON alerts (model_version_id, received_at);
CREATE INDEX alerts_closed_idx ON alerts (closed_at) WHERE state = 'closed';

CREATE TABLE outcomes (
  id                  uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  alert_id            uuid NOT NULL REFERENCES alerts(id),
  -- 1 = the first review, 2 = the second person under the four-eyes rule.
  review_round        smallint NOT NULL CHECK (review_round IN (1, 2)),
  outcome             text NOT NULL CHECK (outcome IN ('confirmed_fraud', 'legitimate', 'inconclusive')),
  reason              text NOT NULL CHECK (length(reason) BETWEEN 1 AND 200),
  note                text CHECK (length(note) <= 4000),
  reviewer_id         uuid NOT NULL REFERENCES users(id),
  claimed_at          timestamptz NOT NULL,
  closed_at           timestamptz NOT NULL,
  handling_seconds    integer NOT NULL CHECK (handling_seconds >= 0),
  origin              text NOT NULL DEFAULT 'screen' CHECK (origin IN ('screen', 'imported')),
  created_at          timestamptz NOT NULL DEFAULT now(),
  UNIQUE (alert_id, review_round),
  CHECK (closed_at >= claimed_at)
);
CREATE INDEX outcomes_reviewer_idx ON outcomes (reviewer_id, closed_at);
CREATE INDEX outcomes_closed_idx ON outcomes (closed_at);

CREATE TABLE labels (
  id                  uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  portfolio_key       text NOT NULL DEFAULT 'default',
  alert_external_id   text NOT NULL,
  -- Null until an alert with that external id arrives: labels may come first and are kept for matching.
  alert_id            uuid REFERENCES alerts(id),
  label               text NOT NULL CHECK (label IN ('fraud', 'genuine')),
  source              text NOT NULL CHECK (source IN ('analyst', 'chargeback', 'customer_report')),
  observed_at         timestamptz NOT NULL,
  reference           text NOT NULL DEFAULT '',
  ingest_batch_id     uuid REFERENCES ingest_batches(id),
  received_at         timestamptz NOT NULL DEFAULT now(),
  UNIQUE (portfolio_key, alert_external_id, source, reference)
);
CREATE INDEX labels_alert_idx ON labels (alert_id, observed_at);
CREATE INDEX labels_unmatched_idx ON labels (portfolio_key, alert_external_id) WHERE alert_id IS NULL;

CREATE TABLE settings (
  key             text PRIMARY KEY CHECK (key ~ '^[a-z_]+$'),
  value           jsonb NOT NULL,
  updated_at      timestamptz NOT NULL DEFAULT now(),
  updated_by_id   uuid REFERENCES users(id)
);

CREATE TABLE label_exports (
  id                uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  requested_by_id   uuid REFERENCES users(id),
  api_client_id     uuid REFERENCES api_clients(id),
  requested_at      timestamptz NOT NULL DEFAULT now(),
  choices           jsonb NOT NULL,
  format            text NOT NULL CHECK (format IN ('csv', 'jsonl', 'parquet')),
  status            text NOT NULL DEFAULT 'running' CHECK (status IN ('running', 'done', 'failed')),
  row_count         integer NOT NULL DEFAULT 0 CHECK (row_count >= 0),
  file_name         text,
  finished_at       timestamptz,
  error             text
);

CREATE TABLE audit_events (
  id              bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  occurred_at     timestamptz NOT NULL DEFAULT clock_timestamp(),
  actor_type      text NOT NULL CHECK (actor_type IN ('user', 'api_client', 'system')),
  actor_id        text,
  actor_label     text NOT NULL,
  action          text NOT NULL CHECK (action ~ '^[a-z_]+\.[a-z_]+$'),
  subject_type    text,
  subject_id      text,
  payload         jsonb NOT NULL DEFAULT '{}'::jsonb,
  request_id      text,
  ip_address      text,
  -- Hash chain: hash = SHA-256(prev_hash || canonical JSON of the event).
  prev_hash       text NOT NULL,
  hash            text NOT NULL UNIQUE
);
CREATE INDEX audit_events_subject_idx ON audit_events (subject_type, subject_id, id);
CREATE INDEX audit_events_actor_idx ON audit_events (actor_id, id);
CREATE INDEX audit_events_action_idx ON audit_events (action, id);
CREATE INDEX audit_events_time_idx ON audit_events (occurred_at);

-- The audit log is append-only. These triggers refuse changes from any role, the owner included;
-- only a superuser who disables triggers can bypass them, and the hash chain then shows it.
CREATE FUNCTION audit_events_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'audit_events is append-only: % is not allowed', TG_OP
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
CREATE TRIGGER audit_events_no_update BEFORE UPDATE OR DELETE ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_refuse_change();
CREATE TRIGGER audit_events_no_truncate BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION audit_events_refuse_change();
