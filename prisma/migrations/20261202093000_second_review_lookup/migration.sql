-- Reviewer quality pairs each first review of its window with the second review of the same alert,
-- and counts the window's second reviews. Second reviews are a small share of all outcomes, but with
-- no index of their own both were read from the whole outcomes table (a sequential scan of 800,000
-- outcomes per view at 1,000,000 alerts, npm run bench -- --scale 1000000 --explain).
CREATE INDEX outcomes_second_review_idx ON outcomes (alert_id, closed_at) WHERE review_round = 2;
