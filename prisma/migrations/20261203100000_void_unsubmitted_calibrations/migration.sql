-- A draft (or a returned record edited after its return) may be voided without
-- ever being submitted: such a record carries no results, and does not need to.
ALTER TABLE calibrations DROP CONSTRAINT calibrations_submitted_has_results;
ALTER TABLE calibrations ADD CONSTRAINT calibrations_submitted_has_results CHECK (
  state IN ('draft', 'returned')
  OR (state = 'voided' AND submitted_at IS NULL)
  OR (results IS NOT NULL AND verdict IS NOT NULL AND library_version IS NOT NULL AND submitted_at IS NOT NULL));
