-- The two results of a budget version (the calibration result and the in-use prediction) and what a run records for them.
-- A run records how long the instrument had been powered before it started (a template's warm-up line compares it with
-- the specification) and the comparator's stated systematic error (what does not average with the readings).
ALTER TABLE calibration_runs ADD COLUMN warm_up_minutes REAL NULL CHECK (warm_up_minutes >= 0);
ALTER TABLE calibration_runs ADD COLUMN comparator_systematic REAL NULL CHECK (comparator_systematic >= 0);

-- stages: the calibration result as stated (the CMC floor, the scope) and the in-use prediction with its conditions, as
-- JSON; NULL for versions made before the two results were kept apart, which stay readable with the one result they
-- were approved with. Fixed like the rest of a version.
ALTER TABLE budget_versions ADD COLUMN stages TEXT NULL;

CREATE TRIGGER budget_versions_stages_fixed BEFORE UPDATE ON budget_versions
WHEN NEW.stages IS NOT OLD.stages
BEGIN SELECT RAISE(ABORT, 'a budget version is never changed; only draft -> approved -> superseded'); END;
