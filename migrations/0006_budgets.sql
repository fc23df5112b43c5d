-- Stored budgets: one per calibration run and template, and its versions. A version is never overwritten: its snapshot
-- (every input with its source, and the evaluation request built from them) and its result are fixed when it is made;
-- only its state moves, draft -> approved -> superseded, and an approval records who, when and what the signature means.
CREATE TABLE budgets (
    id           INTEGER PRIMARY KEY,
    run_id       INTEGER NOT NULL REFERENCES calibration_runs (id),
    template_id  TEXT    NOT NULL,
    created_at   TEXT    NOT NULL,
    created_by   TEXT    NOT NULL
);

CREATE INDEX budgets_run ON budgets (run_id, id);

CREATE TABLE budget_versions (
    budget_id          INTEGER NOT NULL REFERENCES budgets (id),
    number             INTEGER NOT NULL CHECK (number >= 1),
    state              TEXT    NOT NULL CHECK (state IN ('draft', 'approved', 'superseded')),
    reason             TEXT    NOT NULL,
    template_version   INTEGER NOT NULL,
    reading_upload_id  INTEGER NULL REFERENCES reading_uploads (id),
    snapshot           TEXT    NOT NULL,
    result             TEXT    NOT NULL,
    engine_version     TEXT    NOT NULL,
    made_at            TEXT    NOT NULL,
    made_by            TEXT    NOT NULL,
    made_by_person     TEXT    NOT NULL,
    approved_at        TEXT    NULL,
    approved_by        TEXT    NULL,
    signature_meaning  TEXT    NULL,
    superseded_at      TEXT    NULL,
    PRIMARY KEY (budget_id, number)
) WITHOUT ROWID;

CREATE TRIGGER budget_versions_fixed BEFORE UPDATE ON budget_versions
WHEN NEW.snapshot IS NOT OLD.snapshot OR NEW.result IS NOT OLD.result OR NEW.reason IS NOT OLD.reason
  OR NEW.made_by IS NOT OLD.made_by OR NEW.made_at IS NOT OLD.made_at OR NEW.template_version IS NOT OLD.template_version
  OR OLD.state = 'superseded' OR (OLD.state = 'approved' AND NEW.state <> 'superseded')
  OR (OLD.state = 'approved' AND (NEW.approved_by IS NOT OLD.approved_by OR NEW.approved_at IS NOT OLD.approved_at))
BEGIN SELECT RAISE(ABORT, 'a budget version is never changed; only draft -> approved -> superseded'); END;
CREATE TRIGGER budget_versions_no_delete BEFORE DELETE ON budget_versions
BEGIN SELECT RAISE(ABORT, 'a budget version is never deleted'); END;
CREATE TRIGGER budgets_no_delete BEFORE DELETE ON budgets
BEGIN SELECT RAISE(ABORT, 'a budget is never deleted'); END;
