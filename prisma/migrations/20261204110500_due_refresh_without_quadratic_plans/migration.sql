-- The per-statement refresh (20261204110000) removed due dates that no longer apply with
-- NOT EXISTS (… due_computed … c.subject_id = d.subject_id): the planner cannot push that
-- correlated key into the view's branch, so it computed the branch for every subject of
-- the kind (about 150 ms at 10,000 vessels, growing with the registry) on every statement
-- that touched one. The subjects that keep a due date are now found once, by the key array
-- (index lookups of just those subjects), and the delete is an anti-join against that set.
CREATE OR REPLACE FUNCTION due_refresh_many(p_kind TEXT, p_ids UUID[]) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
  IF p_ids IS NULL OR cardinality(p_ids) = 0 THEN
    RETURN;
  END IF;
  EXECUTE format($sql$
    WITH keep AS MATERIALIZED (
      SELECT c.subject_id FROM due_computed c WHERE c.subject_kind = %1$L AND c.subject_id = ANY ($1))
    DELETE FROM due_dates d
     WHERE d.subject_kind = %1$L AND d.subject_id = ANY ($1)
       AND NOT EXISTS (SELECT 1 FROM keep WHERE keep.subject_id = d.subject_id)$sql$, p_kind)
  USING p_ids;
  EXECUTE format($sql$
    INSERT INTO due_dates (subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at,
                           interval_days, basis, policy_id)
    SELECT subject_kind, subject_id, lab_id, subject_label, person_id, due_on, due_soon_on, last_done_at,
           interval_days, basis, policy_id
      FROM due_computed
     WHERE subject_kind = %1$L AND subject_id = ANY ($1)
    ON CONFLICT (subject_kind, subject_id) DO UPDATE SET
      lab_id = EXCLUDED.lab_id, subject_label = EXCLUDED.subject_label, person_id = EXCLUDED.person_id,
      due_on = EXCLUDED.due_on, due_soon_on = EXCLUDED.due_soon_on, last_done_at = EXCLUDED.last_done_at,
      interval_days = EXCLUDED.interval_days, basis = EXCLUDED.basis, policy_id = EXCLUDED.policy_id
    WHERE (due_dates.lab_id, due_dates.subject_label, due_dates.person_id, due_dates.due_on, due_dates.due_soon_on,
           due_dates.last_done_at, due_dates.interval_days, due_dates.basis, due_dates.policy_id)
          IS DISTINCT FROM (EXCLUDED.lab_id, EXCLUDED.subject_label, EXCLUDED.person_id, EXCLUDED.due_on, EXCLUDED.due_soon_on,
           EXCLUDED.last_done_at, EXCLUDED.interval_days, EXCLUDED.basis, EXCLUDED.policy_id)$sql$, p_kind)
  USING p_ids;
END $$;

-- The statement triggers joined the old and new transition tables row by row (nested loops
-- over tables without statistics): an update of 3,000 vessels spent 4 s there, and 25,000
-- did not finish in minutes. What changed is now found with EXCEPT (hashed or sorted, never
-- quadratic); the rest of the function is as before.
CREATE OR REPLACE FUNCTION due_track_statement() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  k TEXT;
BEGIN
  CASE TG_TABLE_NAME
    WHEN 'vessels' THEN
      PERFORM due_refresh_many('vessel', ARRAY(SELECT id FROM new_rows));
      IF TG_OP = 'UPDATE' THEN
        PERFORM due_refresh_many('factor', ARRAY(
          SELECT f.id FROM factors f
           WHERE f.state = 'current'
             AND f.vessel_id = ANY (ARRAY(SELECT id FROM (SELECT id, asset_tag FROM new_rows
                                                           EXCEPT SELECT id, asset_tag FROM old_rows) renamed))));
      END IF;
    WHEN 'calibrations' THEN
      IF TG_OP = 'INSERT' THEN
        PERFORM due_refresh_many('vessel', ARRAY(SELECT DISTINCT vessel_id FROM new_rows WHERE state = 'approved'));
      ELSE
        -- Rows whose state changed, seen before and after; those approved on either side move a due date.
        PERFORM due_refresh_many('vessel', ARRAY(
          SELECT DISTINCT vessel_id FROM (
            (SELECT id, vessel_id, state FROM new_rows EXCEPT ALL SELECT id, vessel_id, state FROM old_rows)
            UNION ALL
            (SELECT id, vessel_id, state FROM old_rows EXCEPT ALL SELECT id, vessel_id, state FROM new_rows)) changed
           WHERE state = 'approved'));
      END IF;
    WHEN 'balances' THEN
      PERFORM due_refresh_many('balance-calibration', ARRAY(SELECT id FROM new_rows));
      PERFORM due_refresh_many('balance-check', ARRAY(SELECT id FROM new_rows));
    WHEN 'balance_checks' THEN
      PERFORM due_refresh_many('balance-check', ARRAY(SELECT DISTINCT balance_id FROM new_rows));
    WHEN 'reference_weights' THEN
      PERFORM due_refresh_many('reference-weight', ARRAY(SELECT id FROM new_rows));
    WHEN 'instruments' THEN
      PERFORM due_refresh_many('instrument', ARRAY(SELECT id FROM new_rows));
    WHEN 'factors' THEN
      IF TG_OP = 'INSERT' THEN
        PERFORM due_refresh_many('factor', ARRAY(SELECT id FROM new_rows));
      ELSE
        PERFORM due_refresh_many('factor', ARRAY(
          SELECT id FROM (SELECT id, state FROM new_rows EXCEPT SELECT id, state FROM old_rows) changed));
      END IF;
    WHEN 'subject_intervals' THEN
      FOR k IN SELECT DISTINCT subject_kind FROM new_rows LOOP
        PERFORM due_refresh_many(k, ARRAY(SELECT subject_id FROM new_rows WHERE subject_kind = k));
      END LOOP;
    WHEN 'people' THEN
      PERFORM due_refresh_many('factor', ARRAY(
        SELECT f.id FROM factors f
         WHERE f.state = 'current'
           AND f.person_id = ANY (ARRAY(SELECT id FROM (SELECT id, display_name FROM new_rows
                                                         EXCEPT SELECT id, display_name FROM old_rows) renamed))));
  END CASE;
  RETURN NULL;
END $$;
