-- Calibrations of vessels, personal factors derived from them, routine balance checks.
-- Rules of the trade that no application bug may break are enforced here.

-- Lab settings read by calibrations, factors and checks.
ALTER TABLE labs
  ADD COLUMN balance_check_window_days  INTEGER NOT NULL DEFAULT 1,
  ADD COLUMN factor_validity_days       INTEGER NOT NULL DEFAULT 365,
  ADD COLUMN allow_traceability_exceptions BOOLEAN NOT NULL DEFAULT false,
  ADD COLUMN quarantine_on_failed_calibration BOOLEAN NOT NULL DEFAULT true,
  ADD CONSTRAINT labs_check_window_range CHECK (balance_check_window_days BETWEEN 1 AND 366),
  ADD CONSTRAINT labs_factor_validity_range CHECK (factor_validity_days BETWEEN 1 AND 3660);

-- Calibrations ------------------------------------------------------------------------
CREATE TABLE calibrations (
  id                      UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                  UUID NOT NULL REFERENCES labs (id),
  vessel_id               UUID NOT NULL REFERENCES vessels (id),
  -- The person whose technique this calibration characterises (and whose factor it yields).
  performer_id            UUID NOT NULL REFERENCES people (id),
  -- Who typed it in: the performer, or a manager on their behalf.
  entered_by_id           UUID NOT NULL REFERENCES people (id),
  balance_id              UUID NOT NULL REFERENCES balances (id),
  thermometer_id          UUID NOT NULL REFERENCES instruments (id),
  state                   TEXT NOT NULL DEFAULT 'draft',
  performed_at            TIMESTAMPTZ(3) NOT NULL,
  delivery_mode           TEXT NOT NULL,
  -- Inputs: air conditions (or a measured air density) and the test points with their replicates.
  air_temperature_c       NUMERIC(6, 3),
  air_pressure_pa         NUMERIC(10, 2),
  air_humidity_percent    NUMERIC(6, 3),
  air_density_kg_per_m3   NUMERIC(10, 7),
  inputs                  JSONB NOT NULL,
  -- Results computed by the metrology library, frozen at submission with its version.
  results                 JSONB,
  verdict                 TEXT,
  library_version         TEXT,
  notes                   TEXT,
  submitted_at            TIMESTAMPTZ(3),
  traceability_exception  TEXT,
  reviewer_id             UUID REFERENCES people (id),
  reviewed_at             TIMESTAMPTZ(3),
  review_note             TEXT,
  voided_by_id            UUID REFERENCES people (id),
  voided_at               TIMESTAMPTZ(3),
  void_reason             TEXT,
  version                 INTEGER NOT NULL DEFAULT 1,
  created_at              TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at              TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT calibrations_state_known CHECK (state IN ('draft', 'submitted', 'approved', 'returned', 'voided')),
  CONSTRAINT calibrations_delivery_mode_known CHECK (delivery_mode IN ('contain', 'deliver')),
  CONSTRAINT calibrations_verdict_known CHECK (verdict IS NULL OR verdict IN ('pass', 'fail', 'no-limit')),
  CONSTRAINT calibrations_submitted_has_results CHECK (
    state IN ('draft', 'returned') OR (results IS NOT NULL AND verdict IS NOT NULL AND library_version IS NOT NULL AND submitted_at IS NOT NULL)),
  CONSTRAINT calibrations_reviewed CHECK (state NOT IN ('approved') OR (reviewer_id IS NOT NULL AND reviewed_at IS NOT NULL)),
  CONSTRAINT calibrations_voided CHECK (state <> 'voided' OR (voided_at IS NOT NULL AND voided_by_id IS NOT NULL AND char_length(coalesce(void_reason, '')) >= 3)),
  CONSTRAINT calibrations_version_positive CHECK (version >= 1),
  -- Target of the factors' composite key: a factor names the very performer and vessel of its calibration.
  CONSTRAINT calibrations_id_performer_vessel_key UNIQUE (id, performer_id, vessel_id)
);
CREATE INDEX calibrations_vessel_idx ON calibrations (vessel_id, performed_at DESC);
CREATE INDEX calibrations_lab_state_idx ON calibrations (lab_id, state, performed_at DESC);
CREATE INDEX calibrations_performer_idx ON calibrations (performer_id, performed_at DESC);
CREATE INDEX calibrations_balance_idx ON calibrations (balance_id, performed_at);
CREATE INDEX calibrations_thermometer_idx ON calibrations (thermometer_id, performed_at);

-- Once submitted, inputs and results are frozen: only the review and void columns
-- may change, along the allowed state transitions. Nothing is ever deleted.
CREATE FUNCTION calibrations_guard() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'calibrations are never deleted; void them with a reason' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.state IN ('draft', 'returned') THEN
    IF NEW.state NOT IN ('draft', 'returned', 'submitted', 'voided') THEN
      RAISE EXCEPTION 'calibration % cannot go from % to %', OLD.id, OLD.state, NEW.state USING ERRCODE = 'check_violation';
    END IF;
    RETURN NEW;
  END IF;
  IF (NEW.lab_id, NEW.vessel_id, NEW.performer_id, NEW.entered_by_id, NEW.balance_id, NEW.thermometer_id, NEW.performed_at,
      NEW.delivery_mode, NEW.air_temperature_c, NEW.air_pressure_pa, NEW.air_humidity_percent, NEW.air_density_kg_per_m3,
      NEW.inputs, NEW.results, NEW.verdict, NEW.library_version, NEW.notes, NEW.submitted_at, NEW.traceability_exception)
     IS DISTINCT FROM
     (OLD.lab_id, OLD.vessel_id, OLD.performer_id, OLD.entered_by_id, OLD.balance_id, OLD.thermometer_id, OLD.performed_at,
      OLD.delivery_mode, OLD.air_temperature_c, OLD.air_pressure_pa, OLD.air_humidity_percent, OLD.air_density_kg_per_m3,
      OLD.inputs, OLD.results, OLD.verdict, OLD.library_version, OLD.notes, OLD.submitted_at, OLD.traceability_exception) THEN
    RAISE EXCEPTION 'calibration % is % and its inputs and results are frozen', OLD.id, OLD.state USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NOT ((OLD.state = 'submitted' AND NEW.state IN ('submitted', 'approved', 'returned', 'voided'))
       OR (OLD.state = 'approved' AND NEW.state IN ('approved', 'voided'))
       OR (OLD.state = 'voided' AND NEW.state = 'voided')) THEN
    RAISE EXCEPTION 'calibration % cannot go from % to %', OLD.id, OLD.state, NEW.state USING ERRCODE = 'check_violation';
  END IF;
  IF OLD.state = 'voided' AND (NEW.voided_at, NEW.voided_by_id, NEW.void_reason, NEW.reviewer_id, NEW.reviewed_at, NEW.review_note)
     IS DISTINCT FROM (OLD.voided_at, OLD.voided_by_id, OLD.void_reason, OLD.reviewer_id, OLD.reviewed_at, OLD.review_note) THEN
    RAISE EXCEPTION 'calibration % is voided and frozen', OLD.id USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER calibrations_guard BEFORE UPDATE OR DELETE ON calibrations FOR EACH ROW EXECUTE FUNCTION calibrations_guard();

-- Personal factors ------------------------------------------------------------------------
CREATE TABLE factors (
  id                       UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id                   UUID NOT NULL REFERENCES labs (id),
  person_id                UUID NOT NULL REFERENCES people (id),
  vessel_id                UUID NOT NULL REFERENCES vessels (id),
  calibration_id           UUID NOT NULL,
  -- 'single' for one-mark ware (a ratio and a correction), 'curve' for graduated ware.
  kind                     TEXT NOT NULL,
  -- Mean volume at 20 °C / nominal volume; for a curve, at the largest point.
  factor                   NUMERIC(20, 15),
  correction_ml            NUMERIC(14, 8),
  -- For curves: [{ nominalVolumeMl, meanVolumeMl, correctionMl, expandedUncertaintyMl }] ascending.
  curve                    JSONB,
  expanded_uncertainty_ml  NUMERIC(14, 8) NOT NULL,
  coverage_factor          NUMERIC(6, 3) NOT NULL,
  reference_temperature_c  NUMERIC(5, 2) NOT NULL DEFAULT 20,
  valid_from               TIMESTAMPTZ(3) NOT NULL,
  valid_until              TIMESTAMPTZ(3) NOT NULL,
  state                    TEXT NOT NULL DEFAULT 'current',
  -- When it stopped being current (superseded by a newer calibration, or withdrawn).
  ended_at                 TIMESTAMPTZ(3),
  superseded_by_id         UUID REFERENCES factors (id),
  -- Set when the balance, thermometer or vessel behind it was later found out of tolerance.
  review_required_at       TIMESTAMPTZ(3),
  review_reason            TEXT,
  created_at               TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT factors_kind_known CHECK (kind IN ('single', 'curve')),
  CONSTRAINT factors_state_known CHECK (state IN ('current', 'superseded', 'withdrawn')),
  CONSTRAINT factors_single_values CHECK (kind <> 'single' OR (factor > 0 AND correction_ml IS NOT NULL AND curve IS NULL)),
  CONSTRAINT factors_curve_values CHECK (kind <> 'curve' OR (jsonb_typeof(curve) = 'array' AND jsonb_array_length(curve) >= 2)),
  CONSTRAINT factors_uncertainty_positive CHECK (expanded_uncertainty_ml >= 0 AND coverage_factor > 0),
  CONSTRAINT factors_validity_order CHECK (valid_until > valid_from),
  CONSTRAINT factors_end_consistent CHECK ((state = 'current') = (ended_at IS NULL)),
  -- The rule of the trade: a factor belongs to the person who performed its calibration, on that vessel.
  CONSTRAINT factors_calibration_fk FOREIGN KEY (calibration_id, person_id, vessel_id)
    REFERENCES calibrations (id, performer_id, vessel_id)
);
-- At most one current factor per person and vessel.
CREATE UNIQUE INDEX factors_one_current_key ON factors (person_id, vessel_id) WHERE state = 'current';
CREATE UNIQUE INDEX factors_calibration_key ON factors (calibration_id);
CREATE INDEX factors_person_vessel_validity_idx ON factors (person_id, vessel_id, valid_from DESC);
CREATE INDEX factors_lab_idx ON factors (lab_id, state);
CREATE INDEX factors_vessel_idx ON factors (vessel_id, state);

-- A factor's values never change; only its state moves on (current -> superseded | withdrawn) and review flags are set.
CREATE FUNCTION factors_guard() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'factors are never deleted' USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF (NEW.lab_id, NEW.person_id, NEW.vessel_id, NEW.calibration_id, NEW.kind, NEW.factor, NEW.correction_ml, NEW.curve,
      NEW.expanded_uncertainty_ml, NEW.coverage_factor, NEW.reference_temperature_c, NEW.valid_from, NEW.valid_until, NEW.created_at)
     IS DISTINCT FROM
     (OLD.lab_id, OLD.person_id, OLD.vessel_id, OLD.calibration_id, OLD.kind, OLD.factor, OLD.correction_ml, OLD.curve,
      OLD.expanded_uncertainty_ml, OLD.coverage_factor, OLD.reference_temperature_c, OLD.valid_from, OLD.valid_until, OLD.created_at) THEN
    RAISE EXCEPTION 'factor % is immutable', OLD.id USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.state <> 'current' AND NEW.state <> OLD.state THEN
    RAISE EXCEPTION 'factor % is % and stays so', OLD.id, OLD.state USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER factors_guard BEFORE UPDATE OR DELETE ON factors FOR EACH ROW EXECUTE FUNCTION factors_guard();

-- Routine balance checks -------------------------------------------------------------------
CREATE TABLE balance_checks (
  id                   UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  lab_id               UUID NOT NULL REFERENCES labs (id),
  balance_id           UUID NOT NULL REFERENCES balances (id),
  performed_by_id      UUID NOT NULL REFERENCES people (id),
  performed_at         TIMESTAMPTZ(3) NOT NULL,
  -- 'quick' (one weight against a lab limit), 'usp41' (repeatability + accuracy), 'eccentricity'.
  kind                 TEXT NOT NULL,
  reference_weight_id  UUID REFERENCES reference_weights (id),
  inputs               JSONB NOT NULL,
  results              JSONB NOT NULL,
  minimum_weight_g     NUMERIC(14, 9),
  passed               BOOLEAN NOT NULL,
  library_version      TEXT NOT NULL,
  notes                TEXT,
  created_at           TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT balance_checks_kind_known CHECK (kind IN ('quick', 'usp41', 'eccentricity')),
  CONSTRAINT balance_checks_minimum_weight_positive CHECK (minimum_weight_g IS NULL OR minimum_weight_g > 0)
);
CREATE INDEX balance_checks_balance_idx ON balance_checks (balance_id, performed_at DESC);
CREATE INDEX balance_checks_lab_idx ON balance_checks (lab_id, performed_at DESC);

CREATE FUNCTION balance_checks_append_only() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'balance checks are records: % refused', TG_OP USING ERRCODE = 'insufficient_privilege';
END $$;
CREATE TRIGGER balance_checks_append_only BEFORE UPDATE OR DELETE ON balance_checks FOR EACH ROW EXECUTE FUNCTION balance_checks_append_only();
