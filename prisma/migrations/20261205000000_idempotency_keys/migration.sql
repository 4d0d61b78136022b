-- Idempotency keys: the first answer to a write sent with an `Idempotency-Key` header, per
-- caller (a person or a service credential), so a retried request gets that answer again
-- and writes nothing twice. A key's row is written in the same transaction as the write
-- it answers: both commit, or neither does. Several instances share this table.
CREATE TABLE idempotency_keys (
  caller_kind      TEXT NOT NULL,
  caller_id        UUID NOT NULL,
  idempotency_key  TEXT NOT NULL,
  request_method   TEXT NOT NULL,
  -- Path and query as sent, for the problem that names a reused key.
  request_path     TEXT NOT NULL,
  -- SHA-256 over method, path and query, and the body in canonical JSON.
  request_hash     BYTEA NOT NULL,
  -- NULL only inside the transaction that claimed the key (see the trigger below).
  response_status  INTEGER,
  -- The headers a replay repeats (ETag, Location), lower-case names.
  response_headers JSONB NOT NULL DEFAULT '{}',
  -- The JSON text sent; NULL for a response without a body (204).
  response_body    TEXT,
  created_at       TIMESTAMPTZ(3) NOT NULL,
  expires_at       TIMESTAMPTZ(3) NOT NULL,
  PRIMARY KEY (caller_kind, caller_id, idempotency_key),
  CONSTRAINT idempotency_keys_caller_known CHECK (caller_kind IN ('person', 'credential')),
  CONSTRAINT idempotency_keys_key_syntax CHECK (idempotency_key ~ '^[A-Za-z0-9._:~+/=-]{1,128}$'),
  CONSTRAINT idempotency_keys_method_write CHECK (request_method IN ('POST', 'PUT', 'PATCH', 'DELETE')),
  CONSTRAINT idempotency_keys_hash_length CHECK (octet_length(request_hash) = 32),
  CONSTRAINT idempotency_keys_status_success CHECK (response_status IS NULL OR response_status BETWEEN 200 AND 299),
  CONSTRAINT idempotency_keys_headers_object CHECK (jsonb_typeof(response_headers) = 'object'),
  CONSTRAINT idempotency_keys_expiry_after_creation CHECK (expires_at > created_at)
);
CREATE INDEX idempotency_keys_expiry_idx ON idempotency_keys (expires_at);

-- A key never commits without the answer it stands for: a claimed row still lacking its
-- status at commit means the write's answer was never recorded, and the commit fails
-- (with the write) instead of leaving a key that would replay nothing.
CREATE FUNCTION idempotency_keys_answered() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF EXISTS (SELECT 1 FROM idempotency_keys k
             WHERE k.caller_kind = NEW.caller_kind AND k.caller_id = NEW.caller_id
               AND k.idempotency_key = NEW.idempotency_key AND k.response_status IS NULL) THEN
    RAISE EXCEPTION 'idempotency key % committed without its response', NEW.idempotency_key
      USING ERRCODE = 'integrity_constraint_violation';
  END IF;
  RETURN NULL;
END;
$$;
CREATE CONSTRAINT TRIGGER idempotency_keys_answered
  AFTER INSERT OR UPDATE ON idempotency_keys
  DEFERRABLE INITIALLY DEFERRED
  FOR EACH ROW EXECUTE FUNCTION idempotency_keys_answered();
