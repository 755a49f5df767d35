-- Lookups of the audit trail screen and of each alert's timeline (lib/audit/find-audit-events.ts).

-- "What did this person do": an actor is found by id or by the label written at the time
-- (an e-mail for people, api:<name> for API clients, the job's name for system actors).
CREATE INDEX audit_events_actor_label_idx ON audit_events (actor_label, id);

-- "What happened to this alert": every alert action carries alertId in its payload (lib/audit/schemas.ts),
-- so the timeline does not depend on each writer also setting the subject.
CREATE INDEX audit_events_payload_alert_idx ON audit_events ((payload->>'alertId'), id) WHERE payload ? 'alertId';

-- Labels can arrive before their alert and name it only by external id.
CREATE INDEX audit_events_label_external_idx ON audit_events ((payload->>'externalId'), id) WHERE action = 'label.received';
