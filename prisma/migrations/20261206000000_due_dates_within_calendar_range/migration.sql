-- Due dates stay within the calendar the service reads and writes (years 0001 to 9999).
-- Dates a client may record reach those ends: a calibration dated 9999-12-30 plus a
-- 365-day interval fell in year 10000, and a certificate due 0001-01-01 less a 30-day
-- lead fell before year 1; both made GET /v1/due, notices and feeds fail, as did a
-- certificate dated 9999-12-31 read as an instant in a zone west of UTC. Such a date now
-- stops at the end of the range (a subject due 9999-12-31 is, in practice, never due).
-- Only the outer select changes; every branch is as in 20261204100000.
CREATE OR REPLACE VIEW due_computed AS
SELECT s.subject_kind, s.subject_id, s.lab_id, s.subject_label, s.person_id,
       least(greatest(s.due_on, DATE '0001-01-01'), DATE '9999-12-31') AS due_on,
       least(greatest(s.due_on - s.lead_days, DATE '0001-01-01'), DATE '9999-12-31') AS due_soon_on,
       -- greatest() skips NULLs: a subject never done keeps a NULL last_done_at.
       CASE WHEN s.last_done_at IS NOT NULL
            THEN least(greatest(s.last_done_at, TIMESTAMPTZ '0001-01-01 00:00:00+00'), TIMESTAMPTZ '9999-12-31 23:59:59.999+00')
       END AS last_done_at,
       s.interval_days, s.basis, s.policy_id
FROM (
  -- Vessels: from the last approved calibration (any performer); a failed one makes it due that day.
  SELECT 'vessel'::text AS subject_kind, v.id AS subject_id, v.lab_id, v.asset_tag AS subject_label, NULL::uuid AS person_id,
         CASE WHEN c.performed_at IS NULL THEN (v.created_at AT TIME ZONE l.time_zone)::date
              WHEN c.verdict = 'fail' THEN (c.performed_at AT TIME ZONE l.time_zone)::date
              ELSE (c.performed_at AT TIME ZONE l.time_zone)::date + iv.days END AS due_on,
         coalesce(p.due_soon_days, 30) AS lead_days,
         c.performed_at AS last_done_at,
         iv.days AS interval_days,
         CASE WHEN c.performed_at IS NULL THEN 'registration' WHEN c.verdict = 'fail' THEN 'failed-result' ELSE 'interval' END AS basis,
         p.id AS policy_id
  FROM vessels v
  JOIN labs l ON l.id = v.lab_id
  LEFT JOIN LATERAL (
    SELECT cal.performed_at, cal.verdict FROM calibrations cal
    WHERE cal.vessel_id = v.id AND cal.state = 'approved'
    ORDER BY cal.performed_at DESC, cal.id DESC LIMIT 1) c ON true
  LEFT JOIN LATERAL (
    SELECT dp.* FROM due_policies dp
    WHERE dp.lab_id = v.lab_id AND dp.subject_kind = 'vessel'
      AND (dp.vessel_kind IS NULL OR dp.vessel_kind = v.kind) AND (dp.accuracy_class IS NULL OR dp.accuracy_class = v.accuracy_class)
    ORDER BY (dp.vessel_kind IS NULL), (dp.accuracy_class IS NULL) LIMIT 1) p ON true
  LEFT JOIN subject_intervals si ON si.subject_kind = 'vessel' AND si.subject_id = v.id AND si.policy_id = p.id AND p.adaptive
  CROSS JOIN LATERAL (
    SELECT CASE WHEN si.interval_days IS NOT NULL THEN least(greatest(si.interval_days, p.min_interval_days), p.max_interval_days)
                ELSE coalesce(p.interval_days, 365) END AS days) iv
  WHERE v.status <> 'retired'

  UNION ALL
  -- External calibration of balances: the certificate's due date, else its date plus the interval.
  SELECT 'balance-calibration', b.id, b.lab_id, b.asset_tag, NULL::uuid,
         coalesce(b.external_calibration_due, b.external_calibration_date + coalesce(p.interval_days, 365),
                  (b.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         b.external_calibration_date::timestamp AT TIME ZONE l.time_zone,
         CASE WHEN b.external_calibration_due IS NULL AND b.external_calibration_date IS NOT NULL THEN coalesce(p.interval_days, 365) END,
         CASE WHEN b.external_calibration_due IS NOT NULL THEN 'certificate'
              WHEN b.external_calibration_date IS NOT NULL THEN 'interval' ELSE 'registration' END,
         p.id
  FROM balances b
  JOIN labs l ON l.id = b.lab_id
  LEFT JOIN due_policies p ON p.lab_id = b.lab_id AND p.subject_kind = 'balance-calibration'
  WHERE b.status <> 'retired'

  UNION ALL
  -- Routine checks of balances: the lab's check window after the latest check; a failed check makes it due that day.
  SELECT 'balance-check', b.id, b.lab_id, b.asset_tag, NULL::uuid,
         CASE WHEN k.performed_at IS NULL THEN (b.created_at AT TIME ZONE l.time_zone)::date
              WHEN NOT k.passed THEN (k.performed_at AT TIME ZONE l.time_zone)::date
              ELSE (k.performed_at AT TIME ZONE l.time_zone)::date + l.balance_check_window_days END,
         coalesce(p.due_soon_days, 0),
         k.performed_at,
         l.balance_check_window_days,
         CASE WHEN k.performed_at IS NULL THEN 'registration' WHEN NOT k.passed THEN 'failed-result' ELSE 'interval' END,
         p.id
  FROM balances b
  JOIN labs l ON l.id = b.lab_id
  LEFT JOIN LATERAL (
    SELECT bc.performed_at, bc.passed FROM balance_checks bc
    WHERE bc.balance_id = b.id ORDER BY bc.performed_at DESC, bc.created_at DESC, bc.id DESC LIMIT 1) k ON true
  LEFT JOIN due_policies p ON p.lab_id = b.lab_id AND p.subject_kind = 'balance-check'
  WHERE b.status <> 'retired'

  UNION ALL
  -- Reference weights record no calibration date: the certificate's due date, or due from registration.
  SELECT 'reference-weight', w.id, w.lab_id, w.asset_tag, NULL::uuid,
         coalesce(w.certificate_due, (w.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         NULL::timestamptz,
         NULL::integer,
         CASE WHEN w.certificate_due IS NOT NULL THEN 'certificate' ELSE 'registration' END,
         p.id
  FROM reference_weights w
  JOIN labs l ON l.id = w.lab_id
  LEFT JOIN due_policies p ON p.lab_id = w.lab_id AND p.subject_kind = 'reference-weight'
  WHERE w.status <> 'retired'

  UNION ALL
  -- Environment instruments: like balances' external calibration.
  SELECT 'instrument', i.id, i.lab_id, i.asset_tag, NULL::uuid,
         coalesce(i.calibration_due, i.calibration_date + coalesce(p.interval_days, 365), (i.created_at AT TIME ZONE l.time_zone)::date),
         coalesce(p.due_soon_days, 30),
         i.calibration_date::timestamp AT TIME ZONE l.time_zone,
         CASE WHEN i.calibration_due IS NULL AND i.calibration_date IS NOT NULL THEN coalesce(p.interval_days, 365) END,
         CASE WHEN i.calibration_due IS NOT NULL THEN 'certificate'
              WHEN i.calibration_date IS NOT NULL THEN 'interval' ELSE 'registration' END,
         p.id
  FROM instruments i
  JOIN labs l ON l.id = i.lab_id
  LEFT JOIN due_policies p ON p.lab_id = i.lab_id AND p.subject_kind = 'instrument'
  WHERE i.status <> 'retired'

  UNION ALL
  -- Current personal factors: due on the local day their validity ends (fixed at issue from factor_validity_days).
  SELECT 'factor', f.id, f.lab_id, left(v.asset_tag || ' · ' || pe.display_name, 300), f.person_id,
         (f.valid_until AT TIME ZONE l.time_zone)::date,
         coalesce(p.due_soon_days, 30),
         f.valid_from,
         NULL::integer,
         'factor-validity',
         p.id
  FROM factors f
  JOIN labs l ON l.id = f.lab_id
  JOIN vessels v ON v.id = f.vessel_id
  JOIN people pe ON pe.id = f.person_id
  LEFT JOIN due_policies p ON p.lab_id = f.lab_id AND p.subject_kind = 'factor'
  WHERE f.state = 'current'
) s;

-- Rows computed before this migration, clamped as the view now computes them.
UPDATE due_dates
SET due_on = least(greatest(due_on, DATE '0001-01-01'), DATE '9999-12-31'),
    due_soon_on = least(greatest(due_soon_on, DATE '0001-01-01'), DATE '9999-12-31'),
    last_done_at = CASE WHEN last_done_at IS NOT NULL
                        THEN least(greatest(last_done_at, TIMESTAMPTZ '0001-01-01 00:00:00+00'), TIMESTAMPTZ '9999-12-31 23:59:59.999+00')
                   END
WHERE due_on NOT BETWEEN DATE '0001-01-01' AND DATE '9999-12-31'
   OR due_soon_on NOT BETWEEN DATE '0001-01-01' AND DATE '9999-12-31'
   OR last_done_at NOT BETWEEN TIMESTAMPTZ '0001-01-01 00:00:00+00' AND TIMESTAMPTZ '9999-12-31 23:59:59.999+00';
