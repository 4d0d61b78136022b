-- Notices: what the scheduler raises when an item or a personal factor falls due.
-- One row per subject, kind of event and due cycle, enforced here so that any
-- number of scheduler instances racing each other still raise each notice once.
-- A due cycle is identified by the due date it announces: when a recalibration
-- moves the due date, the next cycle gets its own notices.
CREATE TABLE notices (
  id                 uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id             uuid NOT NULL REFERENCES labs (id),
  event_kind         text NOT NULL CHECK (event_kind IN ('due-soon', 'overdue')),
  subject_kind       text NOT NULL CHECK (subject_kind IN (
                       'vessel', 'balance-calibration', 'balance-check',
                       'reference-weight', 'instrument', 'factor')),
  subject_id         uuid NOT NULL,
  -- What a reader recognises: an asset tag, or for a factor "asset tag · person".
  subject_label      text NOT NULL CHECK (length(subject_label) BETWEEN 1 AND 300),
  -- The holder of a personal factor; null for items.
  person_id          uuid REFERENCES people (id),
  -- The due date (in the lab's time zone) this notice announces; names the cycle.
  due_on             date NOT NULL,
  raised_at          timestamptz(3) NOT NULL DEFAULT now(),
  detail             jsonb NOT NULL DEFAULT '{}'::jsonb,
  acknowledged_at    timestamptz(3),
  acknowledged_by_id uuid REFERENCES people (id),
  CONSTRAINT notices_once_per_cycle UNIQUE (subject_kind, subject_id, event_kind, due_on),
  CONSTRAINT notices_acknowledged_together CHECK ((acknowledged_at IS NULL) = (acknowledged_by_id IS NULL)),
  CONSTRAINT notices_factor_has_person CHECK ((subject_kind = 'factor') = (person_id IS NOT NULL))
);

CREATE INDEX notices_lab_raised_idx ON notices (lab_id, raised_at DESC, id);
CREATE INDEX notices_person_idx ON notices (person_id, raised_at DESC) WHERE person_id IS NOT NULL;
CREATE INDEX notices_unacknowledged_idx ON notices (lab_id, raised_at DESC) WHERE acknowledged_at IS NULL;

-- Who a notice is for, fixed when it is raised: the lab's managers for items,
-- the holder for their own factor.
CREATE TABLE notice_recipients (
  notice_id uuid NOT NULL REFERENCES notices (id),
  person_id uuid NOT NULL REFERENCES people (id),
  PRIMARY KEY (notice_id, person_id)
);

CREATE INDEX notice_recipients_person_idx ON notice_recipients (person_id);

-- Notices are records: they are acknowledged, never edited or deleted.
CREATE FUNCTION notices_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'notices are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF (NEW.id, NEW.lab_id, NEW.event_kind, NEW.subject_kind, NEW.subject_id, NEW.subject_label,
      NEW.person_id, NEW.due_on, NEW.raised_at, NEW.detail)
     IS DISTINCT FROM
     (OLD.id, OLD.lab_id, OLD.event_kind, OLD.subject_kind, OLD.subject_id, OLD.subject_label,
      OLD.person_id, OLD.due_on, OLD.raised_at, OLD.detail) THEN
    RAISE EXCEPTION 'a notice may only be acknowledged' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.acknowledged_at IS NOT NULL
     AND (NEW.acknowledged_at, NEW.acknowledged_by_id) IS DISTINCT FROM (OLD.acknowledged_at, OLD.acknowledged_by_id) THEN
    RAISE EXCEPTION 'a notice is acknowledged once' USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END $$;

CREATE TRIGGER notices_guard BEFORE UPDATE OR DELETE ON notices FOR EACH ROW EXECUTE FUNCTION notices_guard();
