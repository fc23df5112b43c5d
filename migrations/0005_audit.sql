-- The audit trail: every write in the service appends one entry, in the same transaction as the write. state is the
-- entity's new state as the API shows it (canonical JSON); state_sha256 its SHA-256; entry_sha256 the SHA-256 of the
-- previous entry's hash and this entry's fields (see AuditLog.EntryHash), so that any change to any entry breaks the chain
-- from there on. Append only: the triggers refuse UPDATE and DELETE.
CREATE TABLE audit_entries (
    seq            INTEGER PRIMARY KEY,
    at             TEXT    NOT NULL,
    actor          TEXT    NOT NULL,
    action         TEXT    NOT NULL,
    entity_type    TEXT    NOT NULL,
    entity_id      TEXT    NOT NULL,
    reason         TEXT    NULL,
    state          TEXT    NOT NULL,
    state_sha256   TEXT    NOT NULL,
    previous_sha256 TEXT   NOT NULL,
    entry_sha256   TEXT    NOT NULL
);

CREATE INDEX audit_entries_entity ON audit_entries (entity_type, entity_id, seq);
CREATE INDEX audit_entries_actor ON audit_entries (actor, seq);

CREATE TRIGGER audit_entries_no_edit BEFORE UPDATE ON audit_entries
BEGIN SELECT RAISE(ABORT, 'the audit trail is append only'); END;
CREATE TRIGGER audit_entries_no_delete BEFORE DELETE ON audit_entries
BEGIN SELECT RAISE(ABORT, 'the audit trail is append only'); END;
