-- A lab's vessels by nominal volume, a page at a time: with 56,000 vessels in one lab the
-- planner read the whole table and sorted the lab's rows (npm run bench:plans).
CREATE INDEX vessels_lab_volume_idx ON vessels (lab_id, nominal_volume_ml, id);
