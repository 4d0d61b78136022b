-- Keeping due_dates in step, per statement instead of per row.
--
-- The row triggers called due_refresh once per changed row, and each call planned the
-- whole due_computed view (six branches) again: about 8 ms of planning per row, so a
-- 10,000-vessel import spent over a minute in the trigger. Now each statement refreshes
-- the rows it touched once (transition tables), and the refresh names the subject kind
-- as a literal, so the planner keeps only that kind's branch of the view.

CREATE FUNCTION due_refresh_many(p_kind TEXT, p_ids UUID[]) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
  IF p_ids IS NULL OR cardinality(p_ids) = 0 THEN
    RETURN;
  END IF;
  EXECUTE format($sql$
    DELETE FROM due_dates d
     WHERE d.subject_kind = %1$L AND d.subject_id = ANY ($1)
       AND NOT EXISTS (SELECT 1 FROM due_computed c WHERE c.subject_kind = %1$L AND c.subject_id = d.subject_id)$sql$, p_kind)
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

-- The one-subject form stays for callers that refresh one subject.
CREATE OR REPLACE FUNCTION due_refresh(p_kind TEXT, p_id UUID) RETURNS void LANGUAGE plpgsql AS $$
BEGIN
  PERFORM due_refresh_many(p_kind, ARRAY[p_id]);
END $$;

-- One call per statement; old_rows is read only for updates.
CREATE FUNCTION due_track_statement() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  k TEXT;
BEGIN
  CASE TG_TABLE_NAME
    WHEN 'vessels' THEN
      PERFORM due_refresh_many('vessel', ARRAY(SELECT id FROM new_rows));
      IF TG_OP = 'UPDATE' THEN
        PERFORM due_refresh_many('factor', ARRAY(
          SELECT f.id FROM new_rows n JOIN old_rows o ON o.id = n.id
            JOIN factors f ON f.vessel_id = n.id AND f.state = 'current'
           WHERE o.asset_tag IS DISTINCT FROM n.asset_tag));
      END IF;
    WHEN 'calibrations' THEN
      IF TG_OP = 'INSERT' THEN
        PERFORM due_refresh_many('vessel', ARRAY(SELECT DISTINCT vessel_id FROM new_rows WHERE state = 'approved'));
      ELSE
        PERFORM due_refresh_many('vessel', ARRAY(
          SELECT DISTINCT n.vessel_id FROM new_rows n JOIN old_rows o ON o.id = n.id
           WHERE n.state IS DISTINCT FROM o.state AND 'approved' IN (n.state, o.state)));
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
          SELECT n.id FROM new_rows n JOIN old_rows o ON o.id = n.id WHERE n.state IS DISTINCT FROM o.state));
      END IF;
    WHEN 'subject_intervals' THEN
      FOR k IN SELECT DISTINCT subject_kind FROM new_rows LOOP
        PERFORM due_refresh_many(k, ARRAY(SELECT subject_id FROM new_rows WHERE subject_kind = k));
      END LOOP;
    WHEN 'people' THEN
      PERFORM due_refresh_many('factor', ARRAY(
        SELECT f.id FROM new_rows n JOIN old_rows o ON o.id = n.id
          JOIN factors f ON f.person_id = n.id AND f.state = 'current'
         WHERE o.display_name IS DISTINCT FROM n.display_name));
  END CASE;
  RETURN NULL;
END $$;

-- Same trigger names as before (due_track), so a bulk loader can still switch one off by name.
DROP TRIGGER due_track ON vessels;
DROP TRIGGER due_track ON calibrations;
DROP TRIGGER due_track ON balances;
DROP TRIGGER due_track ON balance_checks;
DROP TRIGGER due_track ON reference_weights;
DROP TRIGGER due_track ON instruments;
DROP TRIGGER due_track ON factors;
DROP TRIGGER due_track ON subject_intervals;
DROP TRIGGER due_track ON people;

CREATE TRIGGER due_track AFTER INSERT ON vessels REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON vessels REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON calibrations REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON calibrations REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON balances REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON balances REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON balance_checks REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON reference_weights REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON reference_weights REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON instruments REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON instruments REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON factors REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON factors REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track AFTER INSERT ON subject_intervals REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON subject_intervals REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
CREATE TRIGGER due_track_update AFTER UPDATE ON people REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION due_track_statement();
