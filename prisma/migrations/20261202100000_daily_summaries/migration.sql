-- Daily summaries of the feedback dashboards (Model health, Reviewer quality).
--
-- Both screens used to read every row of their window on every view: at 1,000,000 alerts (a 30-day
-- window of ~90,000 alerts and ~70,000 outcomes) 0.4–0.5 s a view (npm run bench). Every number they
-- show is a sum over days, or is drawn from lists that can be kept per day, so each model version and
-- UTC day, and each reviewer and UTC day, keeps one summary row; a view adds up a few dozen rows.
--
-- Freshness: writers never touch a summary. Triggers append a mark (model version and day, or day) to
-- a marks table whenever something a summary counts changes; the reader consumes the marks and
-- recomputes those days before it adds up (lib/feedback/refresh-daily-summaries.ts). Appending never
-- waits on another writer, and a day's recompute reads the day's rows only.

-- One row per model version, UTC day of arrival and side of the alert line (below_the_line): the
-- counts of the window summary, and for the alerted side also the calibration-bin sums, the top-k
-- counts (for the k the row was computed with) and the day's scores with their sample keys and
-- ground truth, from which the ranking measures and drift draw their samples. A row with received = 0 records that the day was computed and had nothing.
CREATE TABLE model_version_daily_summaries (
  model_version_id    uuid NOT NULL REFERENCES model_versions(id),
  day                 date NOT NULL,
  below_the_line      boolean NOT NULL,
  received            integer NOT NULL,
  closed              integer NOT NULL,
  mix_fraud           integer NOT NULL,
  mix_legitimate      integer NOT NULL,
  mix_inconclusive    integer NOT NULL,
  truth_fraud         integer NOT NULL,
  truth_legitimate    integer NOT NULL,
  truth_unknown       integer NOT NULL,
  overturned          integer NOT NULL,
  calibration_alerts  integer NOT NULL,
  calibrated_alerts   integer NOT NULL,
  brier_sum           double precision,
  weight_all          double precision,
  weight_resolved     double precision,
  weight_fraud        double precision,
  -- Per calibration bin (lib/feedback/calibration-bins.ts), closed alerts with a probability and a
  -- known truth: how many, the sum of their probabilities, the sum of their truths.
  bin_counts          integer[] NOT NULL DEFAULT '{}',
  bin_sum_p           double precision[] NOT NULL DEFAULT '{}',
  bin_sum_y           double precision[] NOT NULL DEFAULT '{}',
  -- Precision at k: the day's k highest-priority alerts, how many had a known truth, how many fraud.
  top_k               integer NOT NULL,
  top_considered      integer NOT NULL,
  top_resolved        integer NOT NULL,
  top_fraud           integer NOT NULL,
  -- The day's scores with each alert's sample key (a hash of its id, 0..1048575), in key order, so
  -- that a sample "key < θ" is a prefix found by binary search (width_bucket) and sliced out without
  -- unnesting; and the same for the alerts closed with a known ground truth, with that truth.
  scores              double precision[] NOT NULL DEFAULT '{}',
  sample_keys         integer[] NOT NULL DEFAULT '{}',
  labelled_scores     double precision[] NOT NULL DEFAULT '{}',
  labelled_keys       integer[] NOT NULL DEFAULT '{}',
  labelled_truths     smallint[] NOT NULL DEFAULT '{}',
  computed_at         timestamptz NOT NULL DEFAULT now(),
  PRIMARY KEY (model_version_id, day, below_the_line)
);

-- One row per reviewer and UTC day of closing: their first reviews closed that day, the pairs of
-- first and second outcome of those alerts (a 3 × 3 table in outcome order confirmed_fraud,
-- legitimate, inconclusive, row-major), and the second reviews they closed that day.
CREATE TABLE reviewer_daily_summaries (
  reviewer_id             uuid NOT NULL REFERENCES users(id),
  day                     date NOT NULL,
  closed                  integer NOT NULL,
  fraud                   integer NOT NULL,
  legitimate              integer NOT NULL,
  inconclusive            integer NOT NULL,
  with_probability        integer NOT NULL,
  fraud_with_probability  integer NOT NULL,
  expected_fraud          double precision,
  calibrated              integer NOT NULL,
  false_clears            integer NOT NULL,
  handling_seconds        integer[] NOT NULL DEFAULT '{}',
  agreement_pairs         integer[] NOT NULL DEFAULT '{0,0,0,0,0,0,0,0,0}',
  second_reviews          integer NOT NULL,
  PRIMARY KEY (reviewer_id, day)
);

-- The UTC days whose reviewer summaries are computed (a day without outcomes has no reviewer rows).
CREATE TABLE reviewer_summary_days (
  day          date PRIMARY KEY,
  computed_at  timestamptz NOT NULL DEFAULT now()
);

-- Marks: append-only lists of what changed. No key but an identity, so appends never conflict.
CREATE TABLE model_version_day_marks (
  id                bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  model_version_id  uuid NOT NULL,
  day               date NOT NULL
);
CREATE INDEX model_version_day_marks_version_idx ON model_version_day_marks (model_version_id, day);

CREATE TABLE reviewer_day_marks (
  id   bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  day  date NOT NULL
);

-- Statement-level triggers with transition tables: one INSERT of marks per statement, however many
-- rows it wrote (an ingest batch of 10,000 alerts adds one mark per model version and day). A
-- function serves insert and delete alike: each trigger names its transition table the same.

CREATE FUNCTION mark_days_of_alerts() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  INSERT INTO model_version_day_marks (model_version_id, day)
  SELECT DISTINCT model_version_id, (received_at AT TIME ZONE 'UTC')::date FROM changed_alerts;
  RETURN NULL;
END $$;

CREATE TRIGGER alerts_mark_days_on_insert AFTER INSERT ON alerts
  REFERENCING NEW TABLE AS changed_alerts FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_alerts();
-- Alerts are not deleted in use; a deletion (a test's clean-up, a retention job) still marks its days.
CREATE TRIGGER alerts_mark_days_on_delete AFTER DELETE ON alerts
  REFERENCING OLD TABLE AS changed_alerts FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_alerts();

-- Only changes a summary counts mark a day: claiming, releasing, leases and the overdue mark do not.
-- Transition tables have no statistics: the planner joined the old and new rows of an 80,000-row
-- update in a nested loop (minutes). The function's own setting makes it a hash join, and ends with
-- the function.
CREATE FUNCTION mark_days_of_updated_alerts() RETURNS trigger LANGUAGE plpgsql SET enable_nestloop = off AS $$
BEGIN
  INSERT INTO model_version_day_marks (model_version_id, day)
  SELECT DISTINCT x.model_version_id, x.day
    FROM old_alerts o
    JOIN new_alerts n ON n.id = o.id
   CROSS JOIN LATERAL (VALUES (o.model_version_id, (o.received_at AT TIME ZONE 'UTC')::date),
                              (n.model_version_id, (n.received_at AT TIME ZONE 'UTC')::date)) AS x(model_version_id, day)
   WHERE (o.state = 'closed') IS DISTINCT FROM (n.state = 'closed')
      OR o.final_outcome IS DISTINCT FROM n.final_outcome
      OR o.probability IS DISTINCT FROM n.probability
      OR o.calibrated IS DISTINCT FROM n.calibrated
      OR o.score IS DISTINCT FROM n.score
      OR o.priority IS DISTINCT FROM n.priority
      OR o.below_the_line IS DISTINCT FROM n.below_the_line
      OR o.inclusion_probability IS DISTINCT FROM n.inclusion_probability
      OR o.received_at IS DISTINCT FROM n.received_at
      OR o.model_version_id IS DISTINCT FROM n.model_version_id;
  RETURN NULL;
END $$;

CREATE TRIGGER alerts_mark_days_on_update AFTER UPDATE ON alerts
  REFERENCING OLD TABLE AS old_alerts NEW TABLE AS new_alerts FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_updated_alerts();

-- A label changes the ground truth of its alert's day and, through false clears, of the day its
-- first review closed. Labels are matched to alerts on arrival or later (alert_id set by ingest).
CREATE FUNCTION mark_days_of_labels() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  INSERT INTO model_version_day_marks (model_version_id, day)
  SELECT DISTINCT a.model_version_id, (a.received_at AT TIME ZONE 'UTC')::date
    FROM changed_labels l JOIN alerts a ON a.id = l.alert_id;
  INSERT INTO reviewer_day_marks (day)
  SELECT DISTINCT (o.closed_at AT TIME ZONE 'UTC')::date
    FROM changed_labels l JOIN outcomes o ON o.alert_id = l.alert_id AND o.review_round = 1;
  RETURN NULL;
END $$;

CREATE TRIGGER labels_mark_days_on_insert AFTER INSERT ON labels
  REFERENCING NEW TABLE AS changed_labels FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_labels();
CREATE TRIGGER labels_mark_days_on_update AFTER UPDATE ON labels
  REFERENCING NEW TABLE AS changed_labels FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_labels();
CREATE TRIGGER labels_mark_days_on_delete AFTER DELETE ON labels
  REFERENCING OLD TABLE AS changed_labels FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_labels();

-- An outcome counts on the day it closed; a second review also changes the agreement pairs of the
-- day its alert's first review closed.
CREATE FUNCTION mark_days_of_outcomes() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  INSERT INTO reviewer_day_marks (day)
  SELECT (n.closed_at AT TIME ZONE 'UTC')::date FROM changed_outcomes n
   UNION
  SELECT (f.closed_at AT TIME ZONE 'UTC')::date
    FROM changed_outcomes n JOIN outcomes f ON f.alert_id = n.alert_id AND f.review_round = 1
   WHERE n.review_round = 2;
  RETURN NULL;
END $$;

CREATE TRIGGER outcomes_mark_days_on_insert AFTER INSERT ON outcomes
  REFERENCING NEW TABLE AS changed_outcomes FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_outcomes();
CREATE TRIGGER outcomes_mark_days_on_delete AFTER DELETE ON outcomes
  REFERENCING OLD TABLE AS changed_outcomes FOR EACH STATEMENT EXECUTE FUNCTION mark_days_of_outcomes();
