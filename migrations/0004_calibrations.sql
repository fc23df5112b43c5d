-- Calibration runs: one comparison of an instrument's timebase against a reference standard, with its conditions.
-- The posture is kept as the up vector actually used (and the name of the instrument's posture when one was chosen).
CREATE TABLE calibration_runs (
    id                           INTEGER PRIMARY KEY,
    instrument_id                INTEGER NOT NULL REFERENCES instruments (id),
    reference_id                 INTEGER NOT NULL REFERENCES reference_standards (id),
    comparator                   TEXT    NOT NULL,
    comparator_resolution        REAL    NOT NULL CHECK (comparator_resolution > 0),
    gate_time_s                  REAL    NOT NULL CHECK (gate_time_s > 0),
    posture_name                 TEXT    NULL,
    up_x                         REAL    NOT NULL,
    up_y                         REAL    NOT NULL,
    up_z                         REAL    NOT NULL,
    temperature_c                REAL    NULL,
    temperature_variation_k      REAL    NULL CHECK (temperature_variation_k >= 0),
    relative_humidity_percent    REAL    NULL CHECK (relative_humidity_percent BETWEEN 0 AND 100),
    supply                       TEXT    NOT NULL DEFAULT '',
    condition                    TEXT    NOT NULL CHECK (condition IN ('as-found', 'as-left')),
    operator                     TEXT    NOT NULL,
    started_at                   TEXT    NOT NULL,
    ended_at                     TEXT    NULL,
    notes                        TEXT    NOT NULL DEFAULT '',
    retired_at                   TEXT    NULL,
    retired_reason               TEXT    NULL,
    version                      INTEGER NOT NULL DEFAULT 1,
    created_at                   TEXT    NOT NULL,
    created_by                   TEXT    NOT NULL,
    updated_at                   TEXT    NOT NULL,
    updated_by                   TEXT    NOT NULL
);

CREATE INDEX calibration_runs_instrument ON calibration_runs (instrument_id, id);
CREATE INDEX calibration_runs_reference ON calibration_runs (reference_id, id);

-- Each upload of readings to a run, kept as received. A correction is a new upload naming the one it supersedes and why;
-- nothing is ever edited or deleted (the triggers below refuse it). sha256 is '' only while the upload is being written,
-- inside the transaction that writes it.
CREATE TABLE reading_uploads (
    id             INTEGER PRIMARY KEY,
    run_id         INTEGER NOT NULL REFERENCES calibration_runs (id),
    supersedes_id  INTEGER NULL REFERENCES reading_uploads (id),
    reason         TEXT    NULL,
    media_type     TEXT    NOT NULL,
    part_encoding  TEXT    NOT NULL DEFAULT 'deflate' CHECK (part_encoding IN ('identity', 'deflate')),
    quantity       TEXT    NOT NULL DEFAULT '' CHECK (quantity IN ('', 'frequencyHz', 'fractionalOffset')),
    byte_count     INTEGER NOT NULL DEFAULT 0,
    sha256         TEXT    NOT NULL DEFAULT '',
    reading_count  INTEGER NOT NULL DEFAULT 0,
    first_at       TEXT    NULL,
    last_at        TEXT    NULL,
    uploaded_at    TEXT    NOT NULL,
    uploaded_by    TEXT    NOT NULL
);

CREATE INDEX reading_uploads_run ON reading_uploads (run_id, id);

-- The bytes as received, in parts of at most 1 MiB so that neither side holds a whole file in memory; each part is
-- compressed on its own (raw DEFLATE, RFC 1951) when the upload's part_encoding says so. The SHA-256 is of the bytes as received.
CREATE TABLE reading_upload_parts (
    upload_id  INTEGER NOT NULL REFERENCES reading_uploads (id),
    part       INTEGER NOT NULL,
    bytes      BLOB    NOT NULL,
    PRIMARY KEY (upload_id, part)
) WITHOUT ROWID;

-- The parsed table, by columns in blocks of up to 4096 readings (a row a reading costs about 4 us per insert here, which
-- would put a million-reading upload far past its time; blocks cost next to nothing and read back as fast).
-- at_ticks: count int64 values, UTC in 100 ns units since 1970-01-01T00:00:00Z; fractional_offset: count float64, the
-- reading's (f - f0) / f0 with f0 the instrument's nominal frequency (or the value given); frequency_hz and gate_time_s:
-- count float64 with NaN where a reading has none, or NULL when no reading of the block has one. All little-endian.
CREATE TABLE reading_blocks (
    upload_id          INTEGER NOT NULL REFERENCES reading_uploads (id),
    block              INTEGER NOT NULL,
    first_seq          INTEGER NOT NULL,
    count              INTEGER NOT NULL CHECK (count BETWEEN 1 AND 4096),
    at_ticks           BLOB    NOT NULL,
    fractional_offset  BLOB    NOT NULL,
    frequency_hz       BLOB    NULL,
    gate_time_s        BLOB    NULL,
    PRIMARY KEY (upload_id, block)
) WITHOUT ROWID;

CREATE TRIGGER reading_uploads_no_edit BEFORE UPDATE ON reading_uploads WHEN OLD.sha256 <> ''
BEGIN SELECT RAISE(ABORT, 'a stored upload of readings is never edited; upload a correction'); END;
CREATE TRIGGER reading_uploads_no_delete BEFORE DELETE ON reading_uploads
BEGIN SELECT RAISE(ABORT, 'a stored upload of readings is never deleted'); END;
CREATE TRIGGER reading_upload_parts_no_edit BEFORE UPDATE ON reading_upload_parts
BEGIN SELECT RAISE(ABORT, 'stored readings are never edited'); END;
CREATE TRIGGER reading_upload_parts_no_delete BEFORE DELETE ON reading_upload_parts
BEGIN SELECT RAISE(ABORT, 'stored readings are never deleted'); END;
CREATE TRIGGER reading_blocks_no_edit BEFORE UPDATE ON reading_blocks
BEGIN SELECT RAISE(ABORT, 'stored readings are never edited'); END;
CREATE TRIGGER reading_blocks_no_delete BEFORE DELETE ON reading_blocks
BEGIN SELECT RAISE(ABORT, 'stored readings are never deleted'); END;
