-- API keys for integrations and staff tools. The key itself is never stored: only a salted SHA-256 of its secret part.
-- A key is "cbk_" + key_id (16 hex digits) + "_" + secret (at least 128 random bits, base64url).
CREATE TABLE api_keys (
    id          INTEGER PRIMARY KEY,
    key_id      TEXT    NOT NULL UNIQUE,
    name        TEXT    NOT NULL UNIQUE,
    role        TEXT    NOT NULL CHECK (role IN ('technician', 'approver', 'auditor', 'integration', 'admin')),
    salt        BLOB    NOT NULL,
    secret_hash BLOB    NOT NULL,
    is_demo     INTEGER NOT NULL DEFAULT 0 CHECK (is_demo IN (0, 1)),
    created_at  TEXT    NOT NULL,
    revoked_at  TEXT    NULL
);
