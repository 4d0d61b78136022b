-- Environment instruments: one expanded uncertainty per measured quantity, each in
-- its own unit (a thermohygrometer has two). Replaces the unitless `uncertainty`
-- column, which no release has written.
ALTER TABLE instruments
  DROP COLUMN uncertainty,
  ADD COLUMN temperature_uncertainty_k      NUMERIC(10, 4),
  ADD COLUMN pressure_uncertainty_pa        NUMERIC(10, 2),
  ADD COLUMN humidity_uncertainty_percent   NUMERIC(7, 3),
  ADD CONSTRAINT instruments_uncertainties_positive CHECK (
    (temperature_uncertainty_k IS NULL OR temperature_uncertainty_k > 0) AND
    (pressure_uncertainty_pa IS NULL OR pressure_uncertainty_pa > 0) AND
    (humidity_uncertainty_percent IS NULL OR humidity_uncertainty_percent > 0)),
  -- Only the quantities the kind of instrument measures.
  ADD CONSTRAINT instruments_uncertainties_fit_kind CHECK (
    (temperature_uncertainty_k IS NULL OR kind IN ('thermometer', 'thermohygrometer')) AND
    (pressure_uncertainty_pa IS NULL OR kind = 'barometer') AND
    (humidity_uncertainty_percent IS NULL OR kind IN ('hygrometer', 'thermohygrometer')));

-- Due-date filters and sorts of the inventory lists.
CREATE INDEX balances_lab_calibration_due_idx ON balances (lab_id, external_calibration_due, id);
CREATE INDEX reference_weights_lab_certificate_due_idx ON reference_weights (lab_id, certificate_due, id);
CREATE INDEX instruments_lab_calibration_due_idx ON instruments (lab_id, calibration_due, id);
CREATE INDEX vessels_lab_created_idx ON vessels (lab_id, created_at, id);
