-- Compliance exports: one row per export the registry streamed, with what was asked,
-- when, by whom, how it ended and the SHA-256 of the bytes it delivered, so that a
-- file handed to an auditor can later be checked against the registry.
CREATE TABLE exports (
  id               UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  report           TEXT NOT NULL,
  format           TEXT NOT NULL,
  requested_by_id  UUID NOT NULL REFERENCES people (id),
  -- Every lab of the registry, or the labs listed.
  all_labs         BOOLEAN NOT NULL,
  lab_ids          UUID[] NOT NULL DEFAULT '{}',
  period_from      TIMESTAMPTZ(3) NOT NULL,
  period_to        TIMESTAMPTZ(3) NOT NULL,
  as_of            TIMESTAMPTZ(3) NOT NULL,
  -- The request as validated (canonical member order), for the record.
  parameters       JSONB NOT NULL,
  state            TEXT NOT NULL DEFAULT 'streaming',
  -- Wall-clock times of the service; they are never written into the exported bytes.
  started_at       TIMESTAMPTZ(3) NOT NULL,
  ended_at         TIMESTAMPTZ(3),
  row_count        BIGINT,
  byte_count       BIGINT,
  sha256           BYTEA,
  -- Summary counts (and the audit chain verification for audit-trail extracts).
  summary          JSONB,
  request_id       TEXT,
  CONSTRAINT exports_report_known CHECK (report IN ('inventory-register', 'calibration-log', 'factor-register',
    'balance-check-log', 'audit-trail', 'overdue-summary')),
  CONSTRAINT exports_format_known CHECK (format IN ('csv', 'ndjson', 'pdf')),
  CONSTRAINT exports_lab_scope CHECK ((all_labs AND cardinality(lab_ids) = 0) OR (NOT all_labs AND cardinality(lab_ids) >= 1)),
  CONSTRAINT exports_period_order CHECK (period_to > period_from),
  CONSTRAINT exports_state_known CHECK (state IN ('streaming', 'completed', 'aborted')),
  CONSTRAINT exports_end_consistent CHECK ((state = 'streaming') = (ended_at IS NULL)),
  CONSTRAINT exports_completed_has_digest CHECK (
    state <> 'completed' OR (sha256 IS NOT NULL AND row_count IS NOT NULL AND byte_count IS NOT NULL)),
  CONSTRAINT exports_sha256_length CHECK (sha256 IS NULL OR octet_length(sha256) = 32),
  CONSTRAINT exports_counts_positive CHECK ((row_count IS NULL OR row_count >= 0) AND (byte_count IS NULL OR byte_count >= 0))
);
CREATE INDEX exports_started_idx ON exports (started_at DESC, id DESC);
CREATE INDEX exports_sha256_idx ON exports (sha256) WHERE sha256 IS NOT NULL;
CREATE INDEX exports_requested_by_idx ON exports (requested_by_id, started_at DESC);

-- An export is a record: never deleted; what was asked never changes; it ends once
-- (streaming -> completed | aborted) and is frozen from then on.
CREATE FUNCTION exports_guard() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'exports are records and are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF (NEW.id, NEW.report, NEW.format, NEW.requested_by_id, NEW.all_labs, NEW.lab_ids, NEW.period_from, NEW.period_to,
      NEW.as_of, NEW.parameters, NEW.started_at, NEW.request_id)
     IS DISTINCT FROM
     (OLD.id, OLD.report, OLD.format, OLD.requested_by_id, OLD.all_labs, OLD.lab_ids, OLD.period_from, OLD.period_to,
      OLD.as_of, OLD.parameters, OLD.started_at, OLD.request_id) THEN
    RAISE EXCEPTION 'export % : what was asked never changes', OLD.id USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.state <> 'streaming' THEN
    RAISE EXCEPTION 'export % has ended (%) and is frozen', OLD.id, OLD.state USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER exports_guard BEFORE UPDATE OR DELETE ON exports FOR EACH ROW EXECUTE FUNCTION exports_guard();
