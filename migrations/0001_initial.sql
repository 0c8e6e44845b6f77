-- cryoledger schema, version 1.
-- Values a user typed are kept as entered (value + unit) beside their SI value.
-- Rows are never destroyed: an edit or a deletion first copies the earlier version into `revisions`.

CREATE TABLE sites (
    id            INTEGER PRIMARY KEY,
    name          TEXT NOT NULL UNIQUE,
    elevation_m   REAL,             -- barometer from the ICAO standard atmosphere when set
    barometer_kpa REAL,             -- an entered barometer (absolute) wins over the elevation
    barometer_pa  REAL,
    deleted_at    TEXT
);

CREATE TABLE carriers (
    id    INTEGER PRIMARY KEY,
    name  TEXT NOT NULL UNIQUE
);

CREATE TABLE vehicles (
    id                           INTEGER PRIMARY KEY,
    carrier_id                   INTEGER NOT NULL REFERENCES carriers(id),
    name                         TEXT NOT NULL UNIQUE,
    meter_repeatability_percent  REAL          -- standard uncertainty of its meter, % of delivered
);

CREATE TABLE tanks (
    id                      INTEGER PRIMARY KEY,
    site_id                 INTEGER NOT NULL REFERENCES sites(id),
    name                    TEXT NOT NULL UNIQUE,
    fluid                   TEXT NOT NULL,
    orientation             TEXT NOT NULL CHECK (orientation IN ('vertical', 'horizontal')),
    diameter_m              REAL NOT NULL CHECK (diameter_m > 0),
    length_m                REAL NOT NULL CHECK (length_m >= 0),
    heads                   TEXT NOT NULL,
    crown_ratio             REAL,           -- torispherical crown radius / D (default 1.0)
    knuckle_ratio           REAL,           -- torispherical knuckle radius / D (default 0.06)
    line_temperature_c      REAL NOT NULL,  -- as entered
    line_temperature_k      REAL NOT NULL,
    dp_unit                 TEXT NOT NULL DEFAULT 'inH2O',
    gauge_span              REAL,           -- full-scale DP of the gauge, in dp_unit as entered
    gauge_span_pa           REAL,
    gauge_accuracy_percent  REAL,           -- accuracy class, % of span (standard uncertainty)
    relief_pressure_value   REAL,
    relief_pressure_unit    TEXT,
    relief_pressure_pa      REAL,           -- SI of the entered value (gauge or absolute, as the unit says)
    reorder_percent         REAL,           -- reorder level, % of gross volume
    ner_percent_per_day     REAL,           -- nameplate normal evaporation rate
    deleted_at              TEXT
);
CREATE INDEX tanks_site ON tanks(site_id);

CREATE TABLE strapping_points (
    tank_id    INTEGER NOT NULL REFERENCES tanks(id),
    level_m    REAL NOT NULL,
    volume_m3  REAL NOT NULL,
    PRIMARY KEY (tank_id, level_m)
) WITHOUT ROWID;

CREATE TABLE readings (
    id                    INTEGER PRIMARY KEY,
    tank_id               INTEGER NOT NULL REFERENCES tanks(id),
    time_text             TEXT NOT NULL,       -- RFC 3339 as entered
    time_ms               INTEGER NOT NULL,    -- the same instant, ms since 1970-01-01 UTC
    dp_value              REAL NOT NULL,
    dp_unit               TEXT NOT NULL,
    dp_pa                 REAL NOT NULL,
    pressure_value        REAL NOT NULL,
    pressure_unit         TEXT NOT NULL,
    pressure_pa           REAL NOT NULL,       -- SI of the entered value (gauge or absolute, as the unit says)
    liquid_temperature_k  REAL,
    note                  TEXT,
    deleted_at            TEXT
);
CREATE UNIQUE INDEX readings_tank_time ON readings(tank_id, time_ms) WHERE deleted_at IS NULL;

CREATE TABLE deliveries (
    id                     INTEGER PRIMARY KEY,
    tank_id                INTEGER NOT NULL REFERENCES tanks(id),
    ticket                 TEXT NOT NULL,
    start_text             TEXT NOT NULL,
    start_ms               INTEGER NOT NULL,
    end_text               TEXT NOT NULL,
    end_ms                 INTEGER NOT NULL CHECK (end_ms >= start_ms),
    quantity_value         REAL NOT NULL,
    quantity_unit          TEXT NOT NULL,
    quantity_si            REAL NOT NULL,      -- kg, or m³ at the unit's reference conditions
    carrier_id             INTEGER NOT NULL REFERENCES carriers(id),
    vehicle_id             INTEGER NOT NULL REFERENCES vehicles(id),
    supply_pressure_value  REAL,
    supply_pressure_unit   TEXT,
    supply_pressure_pa     REAL,
    deleted_at             TEXT
);
CREATE UNIQUE INDEX deliveries_ticket ON deliveries(ticket) WHERE deleted_at IS NULL;
CREATE INDEX deliveries_tank_start ON deliveries(tank_id, start_ms);

-- Earlier versions of edited or deleted rows, as JSON, with when and why.
CREATE TABLE revisions (
    id          INTEGER PRIMARY KEY,
    table_name  TEXT NOT NULL,
    row_id      INTEGER NOT NULL,
    action      TEXT NOT NULL CHECK (action IN ('edit', 'delete')),
    revised_at  TEXT NOT NULL,
    reason      TEXT NOT NULL,
    old_row     TEXT NOT NULL
);
CREATE INDEX revisions_row ON revisions(table_name, row_id);
