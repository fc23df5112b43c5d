-- Instruments whose timebases the laboratory calibrates. The timebase specification is kept as the JSON object the API
-- describes (every engine stores text); the postures the lab uses are rows of their own, in the instrument's body frame.
CREATE TABLE instruments (
    id                   INTEGER PRIMARY KEY,
    asset_number         TEXT    NOT NULL UNIQUE,
    customer             TEXT    NOT NULL,
    manufacturer         TEXT    NOT NULL DEFAULT '',
    model                TEXT    NOT NULL DEFAULT '',
    serial_number        TEXT    NOT NULL DEFAULT '',
    description          TEXT    NOT NULL DEFAULT '',
    oscillator_kind      TEXT    NOT NULL CHECK (oscillator_kind IN ('XO', 'TCXO', 'OCXO', 'rubidium', 'GNSS-disciplined', 'other')),
    nominal_frequency_hz REAL    NOT NULL CHECK (nominal_frequency_hz > 0),
    specification        TEXT    NOT NULL DEFAULT '{}',
    retired_at           TEXT    NULL,
    retired_reason       TEXT    NULL,
    version              INTEGER NOT NULL DEFAULT 1,
    created_at           TEXT    NOT NULL,
    created_by           TEXT    NOT NULL,
    updated_at           TEXT    NOT NULL,
    updated_by           TEXT    NOT NULL
);

CREATE INDEX instruments_customer ON instruments (customer);

CREATE TABLE instrument_postures (
    instrument_id INTEGER NOT NULL REFERENCES instruments (id),
    ordinal       INTEGER NOT NULL,
    name          TEXT    NOT NULL,
    up_x          REAL    NOT NULL,
    up_y          REAL    NOT NULL,
    up_z          REAL    NOT NULL,
    PRIMARY KEY (instrument_id, ordinal),
    UNIQUE (instrument_id, name)
);
