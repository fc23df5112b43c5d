-- People who sign in to the staff pages. Only the ASP.NET Core Identity password hash is stored (PBKDF2 with a salt);
-- repeated failures lock the account for a while. Accounts are disabled, never deleted.
CREATE TABLE users (
    id              INTEGER PRIMARY KEY,
    name            TEXT    NOT NULL UNIQUE COLLATE NOCASE,
    role            TEXT    NOT NULL CHECK (role IN ('technician', 'approver', 'auditor', 'integration', 'admin')),
    password_hash   TEXT    NOT NULL,
    failed_attempts INTEGER NOT NULL DEFAULT 0,
    locked_until    TEXT    NULL,
    is_demo         INTEGER NOT NULL DEFAULT 0 CHECK (is_demo IN (0, 1)),
    created_at      TEXT    NOT NULL,
    disabled_at     TEXT    NULL
);
CREATE TRIGGER users_no_delete BEFORE DELETE ON users
BEGIN SELECT RAISE(ABORT, 'a user is never deleted; disable it'); END;
