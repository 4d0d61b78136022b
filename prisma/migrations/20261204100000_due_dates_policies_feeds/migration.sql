-- Recalibration policies, computed due dates, adaptive intervals and calendar feeds.
--
-- Due dates are computed by one view (due_computed) from the inventory, the
-- calibration history, the checks, the factors and the policies, and kept in
-- due_dates by triggers on every table they depend on, so reads (GET /v1/due,
-- the scheduler, exports through the due_items view) are index scans even at
-- 100,000 items. A due date is a date in the lab's time zone: the day by which
-- the work must be done; the day after it the subject is overdue.

-- Policies ---------------------------------------------------------------------------------
-- One per lab and subject kind (vessels also per vessel kind and accuracy class; the most
-- specific policy applies). Intervals of routine balance checks and of personal factors stay
-- the lab's settings (balance_check_window_days, factor_validity_days): policies of those two
-- kinds carry only the due-soon lead time.
CREATE TABLE due_policies (
  id                    UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                UUID NOT NULL REFERENCES labs (id),
  subject_kind          TEXT NOT NULL,
  vessel_kind           TEXT,
  accuracy_class        TEXT,
  interval_days         INTEGER,
  due_soon_days         INTEGER NOT NULL,
  adaptive              BOOLEAN NOT NULL DEFAULT false,
  min_interval_days     INTEGER,
  max_interval_days     INTEGER,
  max_step_days         INTEGER,
  lengthen_after_passes INTEGER,
  -- Results reviewed from this instant on move an adaptive interval (set when adaptive is switched on).
  adaptive_from         TIMESTAMPTZ(3),
  version               INTEGER NOT NULL DEFAULT 1,
  created_at            TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at            TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT due_policies_subject_kind_known CHECK (subject_kind IN (
    'vessel', 'balance-calibration', 'balance-check', 'reference-weight', 'instrument', 'factor')),
  CONSTRAINT due_policies_vessel_scope CHECK (subject_kind = 'vessel' OR (vessel_kind IS NULL AND accuracy_class IS NULL)),
  CONSTRAINT due_policies_vessel_kind_known CHECK (vessel_kind IS NULL OR vessel_kind IN ('volumetric-flask', 'one-mark-pipette',
    'graduated-pipette', 'burette', 'graduated-cylinder', 'piston-pipette-fixed', 'piston-pipette-variable', 'other')),
  CONSTRAINT due_policies_class_known CHECK (accuracy_class IS NULL OR accuracy_class IN ('A', 'AS', 'B', 'none')),
  CONSTRAINT due_policies_interval_owner CHECK ((subject_kind IN ('balance-check', 'factor')) = (interval_days IS NULL)),
  CONSTRAINT due_policies_interval_range CHECK (interval_days IS NULL OR interval_days BETWEEN 1 AND 3660),
  CONSTRAINT due_policies_lead_range CHECK (due_soon_days BETWEEN 0 AND 366 AND (interval_days IS NULL OR due_soon_days < interval_days)),
  CONSTRAINT due_policies_adaptive_vessels CHECK (NOT adaptive OR subject_kind = 'vessel'),
  CONSTRAINT due_policies_adaptive_complete CHECK (
    (adaptive AND min_interval_days IS NOT NULL AND max_interval_days IS NOT NULL AND max_step_days IS NOT NULL
       AND lengthen_after_passes IS NOT NULL AND adaptive_from IS NOT NULL
       AND min_interval_days >= 1 AND min_interval_days <= interval_days AND interval_days <= max_interval_days
       AND max_interval_days <= 3660 AND max_step_days >= 1 AND lengthen_after_passes BETWEEN 1 AND 20)
    OR (NOT adaptive AND min_interval_days IS NULL AND max_interval_days IS NULL AND max_step_days IS NULL
       AND lengthen_after_passes IS NULL AND adaptive_from IS NULL)),
  CONSTRAINT due_policies_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX due_policies_scope_key
  ON due_policies (lab_id, subject_kind, coalesce(vessel_kind, ''), coalesce(accuracy_class, ''));

-- The adaptive interval in force for one item, with the run of passes behind it.
CREATE TABLE subject_intervals (
  subject_kind          TEXT NOT NULL,
  subject_id            UUID NOT NULL,
  lab_id                UUID NOT NULL REFERENCES labs (id),
  policy_id             UUID NOT NULL REFERENCES due_policies (id),
  interval_days         INTEGER NOT NULL,
  passes_in_row         INTEGER NOT NULL DEFAULT 0,
  -- The last result applied (performed_at and id), so each result moves the interval once.
  last_result_at        TIMESTAMPTZ(3) NOT NULL,
  last_result_id        UUID NOT NULL REFERENCES calibrations (id),
  updated_at            TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  PRIMARY KEY (subject_kind, subject_id),
  CONSTRAINT subject_intervals_kind CHECK (subject_kind = 'vessel'),
  CONSTRAINT subject_intervals_range CHECK (interval_days BETWEEN 1 AND 3660 AND passes_in_row >= 0)
);

-- Every change of an interval: a policy's (set by a person) or an item's (the staircase, on a
-- reviewed result; the reviewer approved the result that moved it). Append-only.
CREATE TABLE interval_changes (
  id                      UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                  UUID NOT NULL REFERENCES labs (id),
  policy_id               UUID NOT NULL REFERENCES due_policies (id),
  subject_kind            TEXT NOT NULL,
  -- Null: the policy's own interval.
  subject_id              UUID,
  method                  TEXT NOT NULL,
  old_interval_days       INTEGER,
  new_interval_days       INTEGER NOT NULL,
  reason                  TEXT NOT NULL,
  approved_by_id          UUID NOT NULL REFERENCES people (id),
  based_on_calibration_id UUID REFERENCES calibrations (id),
  changed_at              TIMESTAMPTZ(3) NOT NULL,
  CONSTRAINT interval_changes_method_known CHECK (method IN ('policy', 'staircase')),
  CONSTRAINT interval_changes_method_shape CHECK (
    (method = 'policy' AND subject_id IS NULL AND based_on_calibration_id IS NULL)
    OR (method = 'staircase' AND subject_id IS NOT NULL AND based_on_calibration_id IS NOT NULL)),
  CONSTRAINT interval_changes_range CHECK (new_interval_days BETWEEN 1 AND 3660),
  CONSTRAINT interval_changes_reason CHECK (char_length(reason) BETWEEN 3 AND 2000)
);
CREATE UNIQUE INDEX interval_changes_result_key ON interval_changes (based_on_calibration_id) WHERE based_on_calibration_id IS NOT NULL;
CREATE INDEX interval_changes_lab_idx ON interval_changes (lab_id, changed_at DESC, id);
CREATE INDEX interval_changes_subject_idx ON interval_changes (subject_id, changed_at DESC) WHERE subject_id IS NOT NULL;

CREATE FUNCTION interval_changes_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'interval changes are records: % refused', TG_OP USING ERRCODE = 'insufficient_privilege';
END $$;
CREATE TRIGGER interval_changes_append_only BEFORE UPDATE OR DELETE ON interval_changes
  FOR EACH ROW EXECUTE FUNCTION interval_changes_append_only();

-- The computation ---------------------------------------------------------------------------
-- One row per subject that has a due date: items not retired, current personal factors.
-- Defaults without a policy (registry defaults, not from a standard): 365 days for vessels,
-- balances and instruments; a due-soon lead time of 30 days (0 for routine checks).
CREATE VIEW due_computed AS
SELECT s.subject_kind, s.subject_id, s.lab_id, s.subject_label, s.person_id, s.due_on,
       s.due_on - s.lead_days AS due_soon_on, s.last_done_at, s.interval_days, s.basis, s.policy_id
FROM (
  -- Vessels: from the last approved calibration (any performer); a failed one makes it due that day.
  SELECT 'vessel'::text AS subject_kind, v.id AS subject_id, v.lab_id, v.asset_tag AS subject_label, NULL::uuid AS person_id,
         CASE WHEN c.performed_at IS NULL THEN (v.created_at AT TIME ZONE l.time_zone)::date
              WHEN c.verdict = 'fail' THEN (c.performed_at AT TIME ZONE l.time_zone)::date
              ELSE (c.performed_at AT TIME ZONE l.time_zone)::date + iv.days END AS due_on,
         coalesce(p.due_soon_days, 30) AS lead_days,
         c.performed_at AS last_done_at,
         iv.days AS interval_days,
         CASE WHEN c.performed_at IS NULL THEN 'registration' WHEN c.verdict = 'fail' THEN 'failed-result' ELSE 'interval' END AS basis,
         p.id AS policy_id
  FROM vessels v
  JOIN labs l ON l.id = v.lab_id
  LEFT JOIN LATERAL (
    SELECT cal.performed_at, cal.verdict FROM calibrations cal
    WHERE cal.vessel_id = v.id AND cal.state = 'approved'
    ORDER BY cal.performed_at DESC, cal.id DESC LIMIT 1) c ON true
  LEFT JOIN LATERAL (
    SELECT dp.* FROM due_policies dp
    WHERE dp.lab_id = v.lab_id AND dp.subject_kind = 'vessel'
      AND (dp.vessel_kind IS NULL OR dp.vessel_kind = v.kind) AND (dp.accuracy_class IS NULL OR dp.accuracy_class = v.accuracy_class)
    ORDER BY (dp.vessel_kind IS NULL), (dp.accuracy_class IS NULL) LIMIT 1) p ON true
  LEFT JOIN subject_intervals si ON si.subject_kind = 'vessel' AND si.subject_id = v.id AND si.policy_id = p.id AND p.adaptive
  CROSS JOIN LATERAL (
    SELECT CASE WHEN si.interval_days IS NOT NULL THEN least(greatest(si.interval_days, p.min_interval_days), p.max_interval_days)
                ELSE coalesce(p.interval_days, 365) END AS days) iv
  WHERE v.status <> 'retired'

  UNION ALL
  -- External calibration of balances: the certificate's due date, else its date plus the interval.
  SELECT 'balance-calibration', b.id, b.lab_id, b.asset_tag, NULL::uuid,
         coalesce(b.external_calibration_due, b.external_calibration_date + coalesce(p.interval_days, 365),
                  (b.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         b.external_calibration_date::timestamp AT TIME ZONE l.time_zone,
         CASE WHEN b.external_calibration_due IS NULL AND b.external_calibration_date IS NOT NULL THEN coalesce(p.interval_days, 365) END,
         CASE WHEN b.external_calibration_due IS NOT NULL THEN 'certificate'
              WHEN b.external_calibration_date IS NOT NULL THEN 'interval' ELSE 'registration' END,
         p.id
  FROM balances b
  JOIN labs l ON l.id = b.lab_id
  LEFT JOIN due_policies p ON p.lab_id = b.lab_id AND p.subject_kind = 'balance-calibration'
  WHERE b.status <> 'retired'

  UNION ALL
  -- Routine checks of balances: the lab's check window after the latest check; a failed check makes it due that day.
  SELECT 'balance-check', b.id, b.lab_id, b.asset_tag, NULL::uuid,
         CASE WHEN k.performed_at IS NULL THEN (b.created_at AT TIME ZONE l.time_zone)::date
              WHEN NOT k.passed THEN (k.performed_at AT TIME ZONE l.time_zone)::date
              ELSE (k.performed_at AT TIME ZONE l.time_zone)::date + l.balance_check_window_days END,
         coalesce(p.due_soon_days, 0),
         k.performed_at,
         l.balance_check_window_days,
         CASE WHEN k.performed_at IS NULL THEN 'registration' WHEN NOT k.passed THEN 'failed-result' ELSE 'interval' END,
         p.id
  FROM balances b
  JOIN labs l ON l.id = b.lab_id
  LEFT JOIN LATERAL (
    SELECT bc.performed_at, bc.passed FROM balance_checks bc
    WHERE bc.balance_id = b.id ORDER BY bc.performed_at DESC, bc.created_at DESC, bc.id DESC LIMIT 1) k ON true
  LEFT JOIN due_policies p ON p.lab_id = b.lab_id AND p.subject_kind = 'balance-check'
  WHERE b.status <> 'retired'

  UNION ALL
  -- Reference weights record no calibration date: the certificate's due date, or due from registration.
  SELECT 'reference-weight', w.id, w.lab_id, w.asset_tag, NULL::uuid,
         coalesce(w.certificate_due, (w.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         NULL::timestamptz,
         NULL::integer,
         CASE WHEN w.certificate_due IS NOT NULL THEN 'certificate' ELSE 'registration' END,
         p.id
  FROM reference_weights w
  JOIN labs l ON l.id = w.lab_id
  LEFT JOIN due_policies p ON p.lab_id = w.lab_id AND p.subject_kind = 'reference-weight'
  WHERE w.status <> 'retired'

  UNION ALL
  -- Environment instruments: like balances' external calibration.
  SELECT 'instrument', i.id, i.lab_id, i.asset_tag, NULL::uuid,
         coalesce(i.calibration_due, i.calibration_date + coalesce(p.interval_days, 365), (i.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         i.calibration_date::timestamp AT TIME ZONE l.time_zone,
         CASE WHEN i.calibration_due IS NULL AND i.calibration_date IS NOT NULL THEN coalesce(p.interval_days, 365) END,
         CASE WHEN i.calibration_due IS NOT NULL THEN 'certificate'
              WHEN i.calibration_date IS NOT NULL THEN 'interval' ELSE 'registration' END,
         p.id
  FROM instruments i
  JOIN labs l ON l.id = i.lab_id
  LEFT JOIN due_policies p ON p.lab_id = i.lab_id AND p.subject_kind = 'instrument'
  WHERE i.status <> 'retired'

  UNION ALL
  -- Current personal factors: due on the local day their validity ends (fixed at issue from factor_validity_days).
  SELECT 'factor', f.id, f.lab_id, left(v.asset_tag || ' · ' || pe.display_name, 300), f.person_id,
         (f.valid_until AT TIME ZONE l.time_zone)::date,
         coalesce(p.due_soon_days, 30),
         f.valid_from,
         NULL::integer,
         'factor-validity',
         p.id
  FROM factors f
  JOIN labs l ON l.id = f.lab_id
  JOIN vessels v ON v.id = f.vessel_id
  JOIN people pe ON pe.id = f.person_id
  LEFT JOIN due_policies p ON p.lab_id = f.lab_id AND p.subject_kind = 'factor'
  WHERE f.state = 'current'
) s;

-- The stored due dates ------------------------------------------------------------------------
CREATE TABLE due_dates (
  subject_kind   TEXT NOT NULL,
  subject_id     UUID NOT NULL,
  lab_id         UUID NOT NULL REFERENCES labs (id),
  subject_label  TEXT NOT NULL,
  person_id      UUID REFERENCES people (id),
  due_on         DATE NOT NULL,
  due_soon_on    DATE NOT NULL,
  last_done_at   TIMESTAMPTZ(3),
  interval_days  INTEGER,
  basis          TEXT NOT NULL,
  policy_id      UUID REFERENCES due_policies (id),
  PRIMARY KEY (subject_kind, subject_id),
  CONSTRAINT due_dates_subject_kind_known CHECK (subject_kind IN (
    'vessel', 'balance-calibration', 'balance-check', 'reference-weight', 'instrument', 'factor')),
  CONSTRAINT due_dates_basis_known CHECK (basis IN ('registration', 'interval', 'certificate', 'failed-result', 'factor-validity')),
  CONSTRAINT due_dates_order CHECK (due_soon_on <= due_on),
  CONSTRAINT due_dates_person CHECK ((subject_kind = 'factor') = (person_id IS NOT NULL))
);
CREATE INDEX due_dates_lab_due_idx ON due_dates (lab_id, due_on, subject_kind, subject_id);
CREATE INDEX due_dates_due_idx ON due_dates (due_on, subject_kind, subject_id);
CREATE INDEX due_dates_lab_soon_idx ON due_dates (lab_id, due_soon_on);
CREATE INDEX due_dates_person_idx ON due_dates (person_id, due_on) WHERE person_id IS NOT NULL;

-- The contract for readers outside this feature (exports): one row per subject with a due date.
-- State is derived by comparing with today in the lab's time zone: overdue after due_on,
-- due soon from due_soon_on, current before.
CREATE VIEW due_items AS
SELECT lab_id, subject_kind, subject_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis
FROM due_dates;

-- Keeping due_dates in step ---------------------------------------------------------------------
CREATE FUNCTION due_refresh(p_kind TEXT, p_id UUID) RETURNS void LANGUAGE plpgsql AS $$
DECLARE
  r due_computed%ROWTYPE;
BEGIN
  SELECT * INTO r FROM due_computed WHERE subject_kind = p_kind AND subject_id = p_id;
  IF NOT FOUND THEN
    DELETE FROM due_dates WHERE subject_kind = p_kind AND subject_id = p_id;
    RETURN;
  END IF;
  INSERT INTO due_dates (subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis, policy_id)
  VALUES (r.subject_kind, r.subject_id, r.lab_id, r.subject_label, r.person_id, r.due_on, r.due_soon_on, r.last_done_at, r.interval_days, r.basis, r.policy_id)
  ON CONFLICT (subject_kind, subject_id) DO UPDATE SET
    lab_id = EXCLUDED.lab_id, subject_label = EXCLUDED.subject_label, person_id = EXCLUDED.person_id, due_on = EXCLUDED.due_on,
    due_soon_on = EXCLUDED.due_soon_on, last_done_at = EXCLUDED.last_done_at, interval_days = EXCLUDED.interval_days,
    basis = EXCLUDED.basis, policy_id = EXCLUDED.policy_id;
END $$;

-- Every subject of a lab (optionally of one kind), set-based: after a policy or lab setting changes.
CREATE FUNCTION due_refresh_lab(p_lab UUID, p_kind TEXT) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
  DELETE FROM due_dates d WHERE d.lab_id = p_lab AND (p_kind IS NULL OR d.subject_kind = p_kind)
    AND NOT EXISTS (SELECT 1 FROM due_computed c WHERE c.subject_kind = d.subject_kind AND c.subject_id = d.subject_id);
  INSERT INTO due_dates (subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis, policy_id)
  SELECT subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis, policy_id
  FROM due_computed WHERE lab_id = p_lab AND (p_kind IS NULL OR subject_kind = p_kind)
  ON CONFLICT (subject_kind, subject_id) DO UPDATE SET
    lab_id = EXCLUDED.lab_id, subject_label = EXCLUDED.subject_label, person_id = EXCLUDED.person_id, due_on = EXCLUDED.due_on,
    due_soon_on = EXCLUDED.due_soon_on, last_done_at = EXCLUDED.last_done_at, interval_days = EXCLUDED.interval_days,
    basis = EXCLUDED.basis, policy_id = EXCLUDED.policy_id
  WHERE (due_dates.lab_id, due_dates.subject_label, due_dates.person_id, due_dates.due_on, due_dates.due_soon_on, due_dates.last_done_at,
         due_dates.interval_days, due_dates.basis, due_dates.policy_id)
        IS DISTINCT FROM (EXCLUDED.lab_id, EXCLUDED.subject_label, EXCLUDED.person_id, EXCLUDED.due_on, EXCLUDED.due_soon_on,
         EXCLUDED.last_done_at, EXCLUDED.interval_days, EXCLUDED.basis, EXCLUDED.policy_id);
END $$;

CREATE FUNCTION due_track() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  CASE TG_TABLE_NAME
    WHEN 'vessels' THEN
      PERFORM due_refresh('vessel', NEW.id);
      IF TG_OP = 'UPDATE' AND OLD.asset_tag IS DISTINCT FROM NEW.asset_tag THEN
        PERFORM due_refresh('factor', f.id) FROM factors f WHERE f.vessel_id = NEW.id AND f.state = 'current';
      END IF;
    WHEN 'calibrations' THEN
      IF NEW.state = 'approved' OR (TG_OP = 'UPDATE' AND OLD.state = 'approved') THEN
        PERFORM due_refresh('vessel', NEW.vessel_id);
      END IF;
    WHEN 'balances' THEN
      PERFORM due_refresh('balance-calibration', NEW.id);
      PERFORM due_refresh('balance-check', NEW.id);
    WHEN 'balance_checks' THEN PERFORM due_refresh('balance-check', NEW.balance_id);
    WHEN 'reference_weights' THEN PERFORM due_refresh('reference-weight', NEW.id);
    WHEN 'instruments' THEN PERFORM due_refresh('instrument', NEW.id);
    WHEN 'factors' THEN PERFORM due_refresh('factor', NEW.id);
    WHEN 'subject_intervals' THEN PERFORM due_refresh(NEW.subject_kind, NEW.subject_id);
    WHEN 'people' THEN
      PERFORM due_refresh('factor', f.id) FROM factors f WHERE f.person_id = NEW.id AND f.state = 'current';
    WHEN 'labs' THEN PERFORM due_refresh_lab(NEW.id, NULL);
    WHEN 'due_policies' THEN
      IF TG_OP = 'DELETE' THEN
        PERFORM due_refresh_lab(OLD.lab_id, OLD.subject_kind);
        RETURN NULL;
      END IF;
      PERFORM due_refresh_lab(NEW.lab_id, NEW.subject_kind);
  END CASE;
  RETURN NULL;
END $$;

CREATE TRIGGER due_track AFTER INSERT OR UPDATE ON vessels FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE OF state ON calibrations FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE ON balances FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT ON balance_checks FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE ON reference_weights FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE ON instruments FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE OF state ON factors FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE ON subject_intervals FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER UPDATE OF display_name ON people FOR EACH ROW EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER UPDATE OF time_zone, balance_check_window_days ON labs FOR EACH ROW
  WHEN (OLD.time_zone IS DISTINCT FROM NEW.time_zone OR OLD.balance_check_window_days IS DISTINCT FROM NEW.balance_check_window_days)
  EXECUTE FUNCTION due_track();
CREATE TRIGGER due_track AFTER INSERT OR UPDATE OR DELETE ON due_policies FOR EACH ROW EXECUTE FUNCTION due_track();

-- Subjects registered before this migration.
INSERT INTO due_dates (subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis, policy_id)
SELECT subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at, interval_days, basis, policy_id
FROM due_computed;

-- Notices: the scheduler's query and the notices list --------------------------------------------
CREATE INDEX notices_lab_event_idx ON notices (lab_id, event_kind, raised_at DESC);

-- Calendar feeds ------------------------------------------------------------------------------------
-- A lab's due dates as iCalendar, reached with a secret token (stored as its SHA-256 only).
CREATE TABLE calendar_feeds (
  id             UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id         UUID NOT NULL REFERENCES labs (id),
  name           TEXT NOT NULL,
  token_hash     BYTEA NOT NULL,
  created_by_id  UUID NOT NULL REFERENCES people (id),
  created_at     TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  revoked_at     TIMESTAMPTZ(3),
  revoked_by_id  UUID REFERENCES people (id),
  CONSTRAINT calendar_feeds_name_length CHECK (char_length(name) BETWEEN 1 AND 100),
  CONSTRAINT calendar_feeds_token_hash_length CHECK (octet_length(token_hash) = 32),
  CONSTRAINT calendar_feeds_revoked_together CHECK ((revoked_at IS NULL) = (revoked_by_id IS NULL))
);
CREATE UNIQUE INDEX calendar_feeds_token_hash_key ON calendar_feeds (token_hash);
CREATE INDEX calendar_feeds_lab_idx ON calendar_feeds (lab_id, created_at, id);

-- A feed is revoked once and otherwise never changes; feeds are never deleted.
CREATE FUNCTION calendar_feeds_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'calendar feeds are revoked, never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF (NEW.id, NEW.lab_id, NEW.name, NEW.token_hash, NEW.created_by_id, NEW.created_at)
     IS DISTINCT FROM (OLD.id, OLD.lab_id, OLD.name, OLD.token_hash, OLD.created_by_id, OLD.created_at)
     OR (OLD.revoked_at IS NOT NULL AND (NEW.revoked_at, NEW.revoked_by_id) IS DISTINCT FROM (OLD.revoked_at, OLD.revoked_by_id)) THEN
    RAISE EXCEPTION 'a calendar feed may only be revoked, once' USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER calendar_feeds_guard BEFORE UPDATE OR DELETE ON calendar_feeds FOR EACH ROW EXECUTE FUNCTION calendar_feeds_guard();
