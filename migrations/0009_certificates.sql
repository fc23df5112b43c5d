-- Issued certificates. The PDF is stored as issued, with its SHA-256 and the worded content it was laid out from (the
-- snapshot), and is never changed: only the state moves, issued -> amended (replaced by a later certificate, named in
-- replaced_by) or issued -> withdrawn (with who, when and why).
CREATE TABLE certificates (
    id               INTEGER PRIMARY KEY,
    number           TEXT    NOT NULL UNIQUE,
    budget_id        INTEGER NOT NULL,
    budget_version   INTEGER NOT NULL,
    instrument_id    INTEGER NOT NULL REFERENCES instruments (id),
    customer         TEXT    NOT NULL,
    state            TEXT    NOT NULL CHECK (state IN ('issued', 'amended', 'withdrawn')),
    replaces_id      INTEGER NULL REFERENCES certificates (id),
    replaced_by_id   INTEGER NULL REFERENCES certificates (id),
    amendment_note   TEXT    NULL,
    settings         TEXT    NOT NULL,
    result           TEXT    NOT NULL,
    decision         TEXT    NULL,
    recall           TEXT    NULL,
    content          TEXT    NOT NULL,
    pdf              BLOB    NOT NULL,
    pdf_sha256       TEXT    NOT NULL,
    issued_at        TEXT    NOT NULL,
    issued_by        TEXT    NOT NULL,
    withdrawn_at     TEXT    NULL,
    withdrawn_by     TEXT    NULL,
    withdrawn_reason TEXT    NULL,
    FOREIGN KEY (budget_id, budget_version) REFERENCES budget_versions (budget_id, number)
);

CREATE INDEX certificates_instrument ON certificates (instrument_id, id);
CREATE INDEX certificates_customer ON certificates (customer, id);

CREATE TRIGGER certificates_fixed BEFORE UPDATE ON certificates
WHEN NEW.pdf IS NOT OLD.pdf OR NEW.pdf_sha256 IS NOT OLD.pdf_sha256 OR NEW.content IS NOT OLD.content OR NEW.number IS NOT OLD.number
  OR NEW.settings IS NOT OLD.settings OR NEW.result IS NOT OLD.result OR NEW.decision IS NOT OLD.decision OR NEW.issued_at IS NOT OLD.issued_at
  OR OLD.state <> 'issued'
BEGIN SELECT RAISE(ABORT, 'an issued certificate is never changed; only issued -> amended or withdrawn'); END;
CREATE TRIGGER certificates_no_delete BEFORE DELETE ON certificates
BEGIN SELECT RAISE(ABORT, 'a certificate is never deleted'); END;
