-- Delivery of notices: webhook endpoints registered per lab, and one delivery
-- row per notice, channel and target, written in the transaction that raises
-- the notice. A worker claims due rows with FOR UPDATE SKIP LOCKED, so any
-- number of service instances send each delivery once per attempt.

-- A lab's webhook endpoint. The signing secret is needed in clear to sign, so
-- it cannot be hashed: it is sealed with AES-256-GCM under a key from the
-- configuration (nonce 12 bytes || tag 16 bytes || ciphertext, with the row id
-- as additional data), and `secret_key_ref` names that key by fingerprint.
CREATE TABLE webhooks (
  id                uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id            uuid NOT NULL REFERENCES labs (id),
  url               text NOT NULL CHECK (length(url) BETWEEN 8 AND 2000 AND url ~ '^https?://[^[:space:]]+$'),
  description       text NOT NULL DEFAULT '' CHECK (length(description) <= 500),
  event_kinds       text[] NOT NULL CHECK (
                      cardinality(event_kinds) BETWEEN 1 AND 10
                      AND event_kinds <@ ARRAY['due-soon', 'overdue']::text[]),
  enabled           boolean NOT NULL DEFAULT true,
  secret_sealed     bytea NOT NULL CHECK (length(secret_sealed) > 28),
  secret_key_ref    text NOT NULL CHECK (secret_key_ref ~ '^[0-9a-f]{16}$'),
  secret_rotated_at timestamptz(3) NOT NULL,
  created_by_id     uuid NOT NULL REFERENCES people (id),
  created_at        timestamptz(3) NOT NULL,
  updated_at        timestamptz(3) NOT NULL,
  version           integer NOT NULL DEFAULT 1 CHECK (version >= 1),
  CONSTRAINT webhooks_id_lab UNIQUE (id, lab_id)
);

CREATE INDEX webhooks_lab_idx ON webhooks (lab_id, created_at, id);

-- One row per notice and target: a webhook of the notice's lab, or a recipient
-- of the notice by e-mail. `target` keeps the URL or address used.
CREATE TABLE notice_deliveries (
  id               uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  notice_id        uuid NOT NULL REFERENCES notices (id),
  lab_id           uuid NOT NULL REFERENCES labs (id),
  channel          text NOT NULL CHECK (channel IN ('webhook', 'email')),
  webhook_id       uuid,
  recipient_id     uuid,
  target           text NOT NULL CHECK (length(target) BETWEEN 1 AND 2000),
  state            text NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'delivered', 'failed')),
  attempts         integer NOT NULL DEFAULT 0 CHECK (attempts >= 0),
  -- Attempts allowed so far: the configured number, raised by each redelivery by hand.
  attempt_limit    integer NOT NULL CHECK (attempt_limit >= 1),
  -- While pending: when the next attempt is due (or, during an attempt, when its claim lapses).
  next_attempt_at  timestamptz(3),
  last_attempt_at  timestamptz(3),
  last_status_code integer CHECK (last_status_code BETWEEN 100 AND 599),
  last_error       text CHECK (length(last_error) <= 1000),
  delivered_at     timestamptz(3),
  failed_at        timestamptz(3),
  redeliveries     integer NOT NULL DEFAULT 0 CHECK (redeliveries >= 0),
  created_at       timestamptz(3) NOT NULL,
  CONSTRAINT notice_deliveries_webhook_of_lab FOREIGN KEY (webhook_id, lab_id) REFERENCES webhooks (id, lab_id),
  CONSTRAINT notice_deliveries_recipient_of_notice FOREIGN KEY (notice_id, recipient_id)
    REFERENCES notice_recipients (notice_id, person_id),
  CONSTRAINT notice_deliveries_one_target CHECK (
    (channel = 'webhook' AND webhook_id IS NOT NULL AND recipient_id IS NULL)
    OR (channel = 'email' AND recipient_id IS NOT NULL AND webhook_id IS NULL)),
  CONSTRAINT notice_deliveries_state_times CHECK (
    (state = 'pending' AND next_attempt_at IS NOT NULL AND delivered_at IS NULL AND failed_at IS NULL)
    OR (state = 'delivered' AND next_attempt_at IS NULL AND delivered_at IS NOT NULL AND failed_at IS NULL)
    OR (state = 'failed' AND next_attempt_at IS NULL AND failed_at IS NOT NULL AND delivered_at IS NULL)),
  CONSTRAINT notice_deliveries_within_limit CHECK (attempts <= attempt_limit)
);

CREATE UNIQUE INDEX notice_deliveries_once_per_webhook ON notice_deliveries (notice_id, webhook_id) WHERE webhook_id IS NOT NULL;
CREATE UNIQUE INDEX notice_deliveries_once_per_recipient ON notice_deliveries (notice_id, recipient_id) WHERE recipient_id IS NOT NULL;
CREATE INDEX notice_deliveries_due_idx ON notice_deliveries (next_attempt_at, id) WHERE state = 'pending';
CREATE INDEX notice_deliveries_lab_idx ON notice_deliveries (lab_id, created_at DESC, id DESC);

-- The delivery log is a record: rows change state, they are never deleted,
-- and what was to be delivered to whom never changes.
CREATE FUNCTION notice_deliveries_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'deliveries are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF (NEW.id, NEW.notice_id, NEW.lab_id, NEW.channel, NEW.webhook_id, NEW.recipient_id, NEW.target, NEW.created_at)
     IS DISTINCT FROM
     (OLD.id, OLD.notice_id, OLD.lab_id, OLD.channel, OLD.webhook_id, OLD.recipient_id, OLD.target, OLD.created_at) THEN
    RAISE EXCEPTION 'a delivery''s notice and target never change' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NEW.attempts < OLD.attempts THEN
    RAISE EXCEPTION 'attempts are never uncounted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END $$;

CREATE TRIGGER notice_deliveries_guard BEFORE UPDATE OR DELETE ON notice_deliveries
  FOR EACH ROW EXECUTE FUNCTION notice_deliveries_guard();
