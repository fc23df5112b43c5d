-- Tip-over tests: the acceleration-sensitivity vector of an instrument fitted from calibration runs in several postures
-- (each run's mean and Type A uncertainty). Budgets use the newest test of the instrument. Never edited or deleted.
CREATE TABLE sensitivity_tests (
    id              INTEGER PRIMARY KEY,
    instrument_id   INTEGER NOT NULL REFERENCES instruments (id),
    gamma_x         REAL    NOT NULL,
    gamma_y         REAL    NOT NULL,
    gamma_z         REAL    NOT NULL,
    offset_at_rest  REAL    NOT NULL,
    covariance      TEXT    NULL,
    dof             INTEGER NOT NULL,
    run_ids         TEXT    NOT NULL,
    notes           TEXT    NOT NULL DEFAULT '',
    tested_at       TEXT    NOT NULL,
    tested_by       TEXT    NOT NULL
);

CREATE INDEX sensitivity_tests_instrument ON sensitivity_tests (instrument_id, id);

CREATE TRIGGER sensitivity_tests_no_edit BEFORE UPDATE ON sensitivity_tests
BEGIN SELECT RAISE(ABORT, 'a tip-over test is never edited; make a new one'); END;
CREATE TRIGGER sensitivity_tests_no_delete BEFORE DELETE ON sensitivity_tests
BEGIN SELECT RAISE(ABORT, 'a tip-over test is never deleted'); END;
