-- Indexes in the order the lists read them, found by `npm run bench:plans` on a registry of
-- 1,000,000 calibrations: the calibration log of every lab was a sequential scan and a sort of
-- the whole table (about 1 s), one lab's log a sort of its 60,000 rows (about 200 ms); a lab's
-- vessels by last change a sort of the lab's vessels.
CREATE INDEX calibrations_performed_idx ON calibrations (performed_at DESC, id DESC);
CREATE INDEX calibrations_lab_performed_idx ON calibrations (lab_id, performed_at DESC, id DESC);
CREATE INDEX vessels_lab_updated_idx ON vessels (lab_id, updated_at, id);
