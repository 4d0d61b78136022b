-- A lab's due dates after its policy or its time zone changed. due_refresh_lab removed the
-- dates that no longer apply with NOT EXISTS (… due_computed …) correlated on the subject:
-- the planner cannot push that key into the view's branch, so it computed the branch for
-- every subject of the kind in the whole registry, whatever the lab's size (about 1 s for a
-- lab of ten vessels beside 90,000 others). The lab's subjects are now listed from their own
-- tables and from due_dates (which catches subjects that no longer have a date), and
-- refreshed by key with due_refresh_many, as the write triggers already do.
CREATE OR REPLACE FUNCTION due_refresh_lab(p_lab UUID, p_kind TEXT) RETURNS void LANGUAGE plpgsql AS $$
DECLARE
  k TEXT;
  subjects TEXT;
BEGIN
  FOREACH k IN ARRAY ARRAY['vessel', 'balance-calibration', 'balance-check', 'reference-weight', 'instrument', 'factor'] LOOP
    CONTINUE WHEN p_kind IS NOT NULL AND k <> p_kind;
    subjects := CASE k
      WHEN 'vessel' THEN 'SELECT id FROM vessels WHERE lab_id = $1'
      WHEN 'balance-calibration' THEN 'SELECT id FROM balances WHERE lab_id = $1'
      WHEN 'balance-check' THEN 'SELECT id FROM balances WHERE lab_id = $1'
      WHEN 'reference-weight' THEN 'SELECT id FROM reference_weights WHERE lab_id = $1'
      WHEN 'instrument' THEN 'SELECT id FROM instruments WHERE lab_id = $1'
      WHEN 'factor' THEN 'SELECT id FROM factors WHERE lab_id = $1 AND state = ''current'''
    END;
    EXECUTE format('SELECT due_refresh_many(%L, ARRAY(%s UNION SELECT subject_id FROM due_dates WHERE lab_id = $1 AND subject_kind = %L))',
                   k, subjects, k)
    USING p_lab;
  END LOOP;
END $$;
