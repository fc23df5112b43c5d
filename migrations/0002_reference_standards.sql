-- The laboratory's reference standards (rubidium, GNSS-disciplined, ...) and their own calibration.
-- version counts updates: it is the resource's ETag.
CREATE TABLE reference_standards (
    id                          INTEGER PRIMARY KEY,
    identity                    TEXT    NOT NULL UNIQUE,
    kind                        TEXT    NOT NULL CHECK (kind IN ('rubidium', 'gnss-disciplined', 'cesium', 'hydrogen-maser', 'ocxo', 'other')),
    description                 TEXT    NOT NULL DEFAULT '',
    nominal_frequency_hz        REAL    NOT NULL CHECK (nominal_frequency_hz > 0),
    certificate_number          TEXT    NOT NULL,
    issuing_lab                 TEXT    NOT NULL,
    calibration_date            TEXT    NOT NULL,
    fractional_offset           REAL    NOT NULL,
    expanded_uncertainty        REAL    NOT NULL CHECK (expanded_uncertainty >= 0),
    coverage_factor             REAL    NOT NULL CHECK (coverage_factor > 0),
    drift_per_day               REAL    NOT NULL DEFAULT 0,
    drift_uncertainty_per_day   REAL    NOT NULL DEFAULT 0 CHECK (drift_uncertainty_per_day >= 0),
    due_date                    TEXT    NOT NULL,
    retired_at                  TEXT    NULL,
    retired_reason              TEXT    NULL,
    version                     INTEGER NOT NULL DEFAULT 1,
    created_at                  TEXT    NOT NULL,
    created_by                  TEXT    NOT NULL,
    updated_at                  TEXT    NOT NULL,
    updated_by                  TEXT    NOT NULL
);

-- Answers to creating POSTs, kept so that a replay with the same Idempotency-Key and body returns the first answer.
CREATE TABLE idempotency_records (
    actor           TEXT    NOT NULL,
    idempotency_key TEXT    NOT NULL,
    operation       TEXT    NOT NULL,
    request_hash    BLOB    NOT NULL,
    status_code     INTEGER NOT NULL,
    location        TEXT    NULL,
    response_body   TEXT    NOT NULL,
    created_at      TEXT    NOT NULL,
    PRIMARY KEY (actor, idempotency_key)
);
