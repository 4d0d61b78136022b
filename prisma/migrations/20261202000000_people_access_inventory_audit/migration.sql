-- People, access, inventory and the append-only, hash-chained audit trail.
-- Stored values of statuses, roles and kinds are the API's own words (kebab-case).

-- Lab settings that later features read.
ALTER TABLE labs
  ADD COLUMN four_eyes_required BOOLEAN NOT NULL DEFAULT true,
  ADD COLUMN retired_at TIMESTAMPTZ(3);

-- People ---------------------------------------------------------------------
CREATE TABLE people (
  id                   UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  email                TEXT NOT NULL,
  display_name         TEXT NOT NULL,
  status               TEXT NOT NULL DEFAULT 'active',
  registry_role        TEXT,
  password_hash        TEXT,
  password_set_at      TIMESTAMPTZ(3),
  must_change_password BOOLEAN NOT NULL DEFAULT false,
  version              INTEGER NOT NULL DEFAULT 1,
  created_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT people_email_lower CHECK (email = lower(email) AND email ~ '^[^@\s]+@[^@\s]+$' AND char_length(email) <= 254),
  CONSTRAINT people_display_name_length CHECK (char_length(display_name) BETWEEN 1 AND 200),
  CONSTRAINT people_status_known CHECK (status IN ('active', 'disabled')),
  CONSTRAINT people_registry_role_known CHECK (registry_role IS NULL OR registry_role IN ('administrator', 'auditor')),
  CONSTRAINT people_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX people_email_key ON people (email);

CREATE TABLE lab_memberships (
  lab_id       UUID NOT NULL REFERENCES labs (id),
  person_id    UUID NOT NULL REFERENCES people (id),
  lab_role     TEXT NOT NULL,
  -- An identifier the lab assigns to the person (e.g. in its sample-management system).
  external_ref TEXT,
  created_at   TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  PRIMARY KEY (lab_id, person_id),
  CONSTRAINT lab_memberships_role_known CHECK (lab_role IN ('manager', 'analyst')),
  CONSTRAINT lab_memberships_external_ref_length CHECK (external_ref IS NULL OR char_length(external_ref) BETWEEN 1 AND 100)
);
CREATE INDEX lab_memberships_person_idx ON lab_memberships (person_id);
CREATE UNIQUE INDEX lab_memberships_external_ref_key ON lab_memberships (lab_id, external_ref) WHERE external_ref IS NOT NULL;

-- Sign-in ----------------------------------------------------------------------
CREATE TABLE sessions (
  id              UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  person_id       UUID NOT NULL REFERENCES people (id),
  -- SHA-256 of the bearer token; the token itself is never stored.
  token_hash      BYTEA NOT NULL,
  created_at      TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  last_seen_at    TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  expires_at      TIMESTAMPTZ(3) NOT NULL,
  revoked_at      TIMESTAMPTZ(3),
  revoked_reason  TEXT,
  client_address  TEXT,
  user_agent      TEXT,
  CONSTRAINT sessions_token_hash_length CHECK (octet_length(token_hash) = 32),
  CONSTRAINT sessions_expiry_after_start CHECK (expires_at > created_at)
);
CREATE UNIQUE INDEX sessions_token_hash_key ON sessions (token_hash);
CREATE INDEX sessions_person_active_idx ON sessions (person_id) WHERE revoked_at IS NULL;

CREATE TABLE sign_in_failures (
  id             BIGINT GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
  email          TEXT NOT NULL,
  client_address TEXT NOT NULL,
  failed_at      TIMESTAMPTZ(3) NOT NULL DEFAULT now()
);
CREATE INDEX sign_in_failures_email_idx ON sign_in_failures (email, failed_at);
CREATE INDEX sign_in_failures_address_idx ON sign_in_failures (client_address, failed_at);

CREATE TABLE service_credentials (
  id            UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  name          TEXT NOT NULL,
  -- Public part of the key, shown in lists; the secret is stored only as SHA-256.
  key_id        TEXT NOT NULL,
  secret_hash   BYTEA NOT NULL,
  scopes        TEXT[] NOT NULL,
  -- Every lab, or only the labs listed.
  all_labs      BOOLEAN NOT NULL,
  lab_ids       UUID[] NOT NULL DEFAULT '{}',
  created_by    UUID NOT NULL REFERENCES people (id),
  created_at    TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  last_used_at  TIMESTAMPTZ(3),
  revoked_at    TIMESTAMPTZ(3),
  replaces_id   UUID REFERENCES service_credentials (id),
  version       INTEGER NOT NULL DEFAULT 1,
  CONSTRAINT service_credentials_name_length CHECK (char_length(name) BETWEEN 1 AND 200),
  CONSTRAINT service_credentials_scopes_known CHECK (
    cardinality(scopes) >= 1 AND scopes <@ ARRAY['factors:read', 'corrections:write', 'calculations:run', 'inventory:read']::TEXT[]),
  CONSTRAINT service_credentials_lab_scope CHECK ((all_labs AND cardinality(lab_ids) = 0) OR (NOT all_labs AND cardinality(lab_ids) >= 1)),
  CONSTRAINT service_credentials_secret_hash_length CHECK (octet_length(secret_hash) = 32)
);
CREATE UNIQUE INDEX service_credentials_key_id_key ON service_credentials (key_id);

-- Inventory ----------------------------------------------------------------------
CREATE TABLE vessels (
  id                          UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                      UUID NOT NULL REFERENCES labs (id),
  asset_tag                   TEXT NOT NULL,
  kind                        TEXT NOT NULL,
  delivery_mode               TEXT NOT NULL,
  nominal_volume_ml           NUMERIC(14, 6) NOT NULL,
  graduation_interval_ml      NUMERIC(14, 6),
  accuracy_class              TEXT NOT NULL,
  class_standard              TEXT,
  material                    TEXT,
  expansion_coefficient_per_k NUMERIC(14, 12) NOT NULL,
  maker_serial                TEXT,
  location                    TEXT,
  limit_ml                    NUMERIC(14, 6),
  limit_source                TEXT NOT NULL,
  limit_reason                TEXT,
  status                      TEXT NOT NULL DEFAULT 'in-service',
  notes                       TEXT,
  version                     INTEGER NOT NULL DEFAULT 1,
  created_at                  TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at                  TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT vessels_asset_tag_format CHECK (asset_tag ~ '^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$'),
  CONSTRAINT vessels_kind_known CHECK (kind IN ('volumetric-flask', 'one-mark-pipette', 'graduated-pipette', 'burette',
    'graduated-cylinder', 'piston-pipette-fixed', 'piston-pipette-variable', 'other')),
  CONSTRAINT vessels_delivery_mode_known CHECK (delivery_mode IN ('contain', 'deliver')),
  CONSTRAINT vessels_delivery_mode_fits_kind CHECK (
    (kind = 'volumetric-flask' AND delivery_mode = 'contain') OR
    (kind IN ('one-mark-pipette', 'graduated-pipette', 'burette', 'piston-pipette-fixed', 'piston-pipette-variable') AND delivery_mode = 'deliver') OR
    kind IN ('graduated-cylinder', 'other')),
  CONSTRAINT vessels_nominal_positive CHECK (nominal_volume_ml > 0),
  CONSTRAINT vessels_graduation_positive CHECK (graduation_interval_ml IS NULL OR (graduation_interval_ml > 0 AND graduation_interval_ml <= nominal_volume_ml)),
  CONSTRAINT vessels_graduated_kinds_have_interval CHECK (
    kind NOT IN ('graduated-pipette', 'burette', 'graduated-cylinder') OR graduation_interval_ml IS NOT NULL),
  CONSTRAINT vessels_class_known CHECK (accuracy_class IN ('A', 'AS', 'B', 'none')),
  CONSTRAINT vessels_expansion_range CHECK (expansion_coefficient_per_k >= 0 AND expansion_coefficient_per_k <= 0.001),
  CONSTRAINT vessels_limit_source_known CHECK (limit_source IN ('class-table', 'lab-override', 'none')),
  CONSTRAINT vessels_limit_consistent CHECK (
    (limit_source = 'none' AND limit_ml IS NULL) OR
    (limit_source = 'class-table' AND limit_ml > 0) OR
    (limit_source = 'lab-override' AND limit_ml > 0 AND char_length(coalesce(limit_reason, '')) >= 3)),
  CONSTRAINT vessels_status_known CHECK (status IN ('in-service', 'quarantined', 'retired')),
  CONSTRAINT vessels_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX vessels_asset_tag_key ON vessels (asset_tag);
CREATE INDEX vessels_lab_kind_status_idx ON vessels (lab_id, kind, status, asset_tag);
CREATE INDEX vessels_lab_asset_tag_idx ON vessels (lab_id, asset_tag);

CREATE TABLE balances (
  id                                  UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                              UUID NOT NULL REFERENCES labs (id),
  asset_tag                           TEXT NOT NULL,
  maker_serial                        TEXT,
  model                               TEXT,
  capacity_g                          NUMERIC(14, 6) NOT NULL,
  readability_g                       NUMERIC(14, 9) NOT NULL,
  adjustment_weight_density_kg_per_m3 NUMERIC(10, 3) NOT NULL DEFAULT 8000,
  location                            TEXT,
  status                              TEXT NOT NULL DEFAULT 'in-service',
  external_calibration_date           DATE,
  external_calibration_certificate    TEXT,
  external_calibration_provider       TEXT,
  external_calibration_due            DATE,
  minimum_weight_g                    NUMERIC(14, 9),
  minimum_weight_determined_at        TIMESTAMPTZ(3),
  notes                               TEXT,
  version                             INTEGER NOT NULL DEFAULT 1,
  created_at                          TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at                          TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT balances_asset_tag_format CHECK (asset_tag ~ '^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$'),
  CONSTRAINT balances_capacity_positive CHECK (capacity_g > 0),
  CONSTRAINT balances_readability_positive CHECK (readability_g > 0 AND readability_g < capacity_g),
  CONSTRAINT balances_weight_density_range CHECK (adjustment_weight_density_kg_per_m3 BETWEEN 2000 AND 25000),
  CONSTRAINT balances_status_known CHECK (status IN ('in-service', 'quarantined', 'retired')),
  CONSTRAINT balances_calibration_dates CHECK (external_calibration_due IS NULL OR external_calibration_date IS NULL OR external_calibration_due > external_calibration_date),
  CONSTRAINT balances_minimum_weight_positive CHECK (minimum_weight_g IS NULL OR minimum_weight_g > 0),
  CONSTRAINT balances_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX balances_asset_tag_key ON balances (asset_tag);
CREATE INDEX balances_lab_status_idx ON balances (lab_id, status, asset_tag);

CREATE TABLE reference_weights (
  id                   UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id               UUID NOT NULL REFERENCES labs (id),
  asset_tag            TEXT NOT NULL,
  nominal_mass_g       NUMERIC(14, 6) NOT NULL,
  oiml_class           TEXT NOT NULL,
  conventional_mass_g  NUMERIC(16, 9),
  -- Expanded uncertainty (k = 2) stated on the certificate.
  uncertainty_g        NUMERIC(16, 9),
  density_kg_per_m3    NUMERIC(10, 3),
  certificate_number   TEXT,
  certificate_due      DATE,
  maker_serial         TEXT,
  location             TEXT,
  status               TEXT NOT NULL DEFAULT 'in-service',
  notes                TEXT,
  version              INTEGER NOT NULL DEFAULT 1,
  created_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT reference_weights_asset_tag_format CHECK (asset_tag ~ '^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$'),
  CONSTRAINT reference_weights_nominal_positive CHECK (nominal_mass_g > 0),
  CONSTRAINT reference_weights_class_known CHECK (oiml_class IN ('E1', 'E2', 'F1', 'F2', 'M1', 'M1-2', 'M2', 'M2-3', 'M3')),
  CONSTRAINT reference_weights_mass_positive CHECK (conventional_mass_g IS NULL OR conventional_mass_g > 0),
  CONSTRAINT reference_weights_uncertainty_positive CHECK (uncertainty_g IS NULL OR uncertainty_g > 0),
  CONSTRAINT reference_weights_density_range CHECK (density_kg_per_m3 IS NULL OR density_kg_per_m3 BETWEEN 2000 AND 25000),
  CONSTRAINT reference_weights_status_known CHECK (status IN ('in-service', 'quarantined', 'retired')),
  CONSTRAINT reference_weights_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX reference_weights_asset_tag_key ON reference_weights (asset_tag);
CREATE INDEX reference_weights_lab_status_idx ON reference_weights (lab_id, status, asset_tag);

CREATE TABLE instruments (
  id                   UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id               UUID NOT NULL REFERENCES labs (id),
  asset_tag            TEXT NOT NULL,
  kind                 TEXT NOT NULL,
  maker_serial         TEXT,
  model                TEXT,
  -- Expanded uncertainty (k = 2) from the certificate, in the unit of the quantity measured.
  uncertainty          NUMERIC(14, 6),
  calibration_date     DATE,
  certificate_number   TEXT,
  calibration_due      DATE,
  location             TEXT,
  status               TEXT NOT NULL DEFAULT 'in-service',
  notes                TEXT,
  version              INTEGER NOT NULL DEFAULT 1,
  created_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT instruments_asset_tag_format CHECK (asset_tag ~ '^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$'),
  CONSTRAINT instruments_kind_known CHECK (kind IN ('thermometer', 'barometer', 'hygrometer', 'thermohygrometer')),
  CONSTRAINT instruments_uncertainty_positive CHECK (uncertainty IS NULL OR uncertainty > 0),
  CONSTRAINT instruments_status_known CHECK (status IN ('in-service', 'quarantined', 'retired')),
  CONSTRAINT instruments_calibration_dates CHECK (calibration_due IS NULL OR calibration_date IS NULL OR calibration_due > calibration_date),
  CONSTRAINT instruments_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX instruments_asset_tag_key ON instruments (asset_tag);
CREATE INDEX instruments_lab_kind_status_idx ON instruments (lab_id, kind, status, asset_tag);

-- Audit trail ------------------------------------------------------------------------
-- Append-only and hash-chained: each entry's hash covers its content and the
-- previous entry's hash, computed here in the database under a transaction-level
-- advisory lock so concurrent writers cannot fork the chain.
CREATE TABLE audit_entries (
  seq          BIGINT PRIMARY KEY,
  id           UUID NOT NULL DEFAULT gen_random_uuid(),
  occurred_at  TIMESTAMPTZ(6) NOT NULL DEFAULT clock_timestamp(),
  actor_kind   TEXT NOT NULL,
  actor_id     UUID,
  action       TEXT NOT NULL,
  entity_type  TEXT NOT NULL,
  entity_id    TEXT NOT NULL,
  lab_id       UUID,
  old_values   JSONB,
  new_values   JSONB,
  reason       TEXT,
  request_id   TEXT,
  prev_hash    BYTEA,
  entry_hash   BYTEA NOT NULL,
  CONSTRAINT audit_entries_actor_kind_known CHECK (actor_kind IN ('person', 'credential', 'system', 'anonymous')),
  CONSTRAINT audit_entries_actor_present CHECK (actor_kind IN ('system', 'anonymous') OR actor_id IS NOT NULL)
);
CREATE UNIQUE INDEX audit_entries_id_key ON audit_entries (id);
CREATE INDEX audit_entries_entity_idx ON audit_entries (entity_type, entity_id, seq);
CREATE INDEX audit_entries_actor_idx ON audit_entries (actor_id, seq);
CREATE INDEX audit_entries_occurred_idx ON audit_entries (occurred_at);
CREATE INDEX audit_entries_lab_idx ON audit_entries (lab_id, seq);

-- The canonical text an entry's hash is computed over (jsonb text is key-ordered).
CREATE FUNCTION audit_entry_digest(e audit_entries) RETURNS BYTEA
LANGUAGE sql IMMUTABLE AS $$
  SELECT sha256(convert_to(concat_ws(E'\x1f',
    e.seq::text, e.id::text, to_char(e.occurred_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"'),
    e.actor_kind, coalesce(e.actor_id::text, ''), e.action, e.entity_type, e.entity_id,
    coalesce(e.lab_id::text, ''), coalesce(e.old_values::text, ''), coalesce(e.new_values::text, ''),
    coalesce(e.reason, ''), coalesce(e.request_id, ''), coalesce(encode(e.prev_hash, 'hex'), '')), 'UTF8'))
$$;

CREATE FUNCTION audit_entries_chain() RETURNS trigger
LANGUAGE plpgsql AS $$
DECLARE
  last audit_entries%ROWTYPE;
BEGIN
  -- One writer at a time extends the chain; held until the transaction ends.
  PERFORM pg_advisory_xact_lock(72707370);
  SELECT * INTO last FROM audit_entries ORDER BY seq DESC LIMIT 1;
  NEW.seq := coalesce(last.seq, 0) + 1;
  NEW.prev_hash := last.entry_hash;
  NEW.occurred_at := clock_timestamp();
  NEW.entry_hash := audit_entry_digest(NEW);
  RETURN NEW;
END $$;

CREATE FUNCTION audit_entries_refuse_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'audit entries are append-only: % refused', TG_OP USING ERRCODE = 'insufficient_privilege';
END $$;

CREATE TRIGGER audit_entries_chain BEFORE INSERT ON audit_entries FOR EACH ROW EXECUTE FUNCTION audit_entries_chain();
CREATE TRIGGER audit_entries_no_update BEFORE UPDATE OR DELETE ON audit_entries FOR EACH ROW EXECUTE FUNCTION audit_entries_refuse_change();
CREATE TRIGGER audit_entries_no_truncate BEFORE TRUNCATE ON audit_entries FOR EACH STATEMENT EXECUTE FUNCTION audit_entries_refuse_change();

-- The service's runtime role: may read and append the audit trail, never change it.
-- Created by the embedded server manager, or by the operator for an external server;
-- grants are applied when the role exists.
DO $$
BEGIN
  IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'registry_app') THEN
    GRANT USAGE ON SCHEMA public TO registry_app;
    GRANT SELECT, INSERT, UPDATE ON ALL TABLES IN SCHEMA public TO registry_app;
    GRANT DELETE ON sessions, sign_in_failures TO registry_app;
    REVOKE UPDATE, DELETE, TRUNCATE ON audit_entries FROM registry_app;
    GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO registry_app;
  END IF;
END $$;
