-- 0001: the readings store.
-- Stations carry the user's own station code and free-form site metadata as
-- JSON text, so diagnostics can be joined with any site attribute.
CREATE TABLE stations (
    id          TEXT PRIMARY KEY NOT NULL,
    name        TEXT,
    latitude    REAL CHECK (latitude IS NULL OR (latitude BETWEEN -90 AND 90)),
    longitude   REAL CHECK (longitude IS NULL OR (longitude BETWEEN -180 AND 180)),
    elevation_m REAL,
    metadata    TEXT NOT NULL DEFAULT '{}' CHECK (json_valid(metadata))
);

-- One row per (station, variable).
CREATE TABLE series (
    id         INTEGER PRIMARY KEY,
    station_id TEXT NOT NULL REFERENCES stations(id) ON UPDATE CASCADE,
    variable   TEXT NOT NULL,
    unit       TEXT,
    UNIQUE (station_id, variable)
);

-- Readings: t is unix seconds UTC; qualifier is the source's flag text verbatim.
CREATE TABLE readings (
    series_id INTEGER NOT NULL REFERENCES series(id),
    t         INTEGER NOT NULL,
    value     REAL NOT NULL,
    qualifier TEXT,
    PRIMARY KEY (series_id, t)
) WITHOUT ROWID;

-- What was imported, from which file, when, and how every offered row ended.
CREATE TABLE import_batches (
    id            INTEGER PRIMARY KEY,
    kind          TEXT NOT NULL CHECK (kind IN ('stations', 'readings')),
    source        TEXT NOT NULL,
    source_sha256 TEXT,
    started_at    TEXT NOT NULL,
    finished_at   TEXT,
    options       TEXT NOT NULL DEFAULT '{}' CHECK (json_valid(options)),
    rows_read     INTEGER NOT NULL DEFAULT 0,
    rows_stored   INTEGER NOT NULL DEFAULT 0,
    rows_rejected INTEGER NOT NULL DEFAULT 0,
    rows_duplicate INTEGER NOT NULL DEFAULT 0,
    rows_replaced INTEGER NOT NULL DEFAULT 0
);

-- Rows of a batch that were not stored, with the reason.
CREATE TABLE import_rejects (
    batch_id INTEGER NOT NULL REFERENCES import_batches(id),
    line     INTEGER NOT NULL,
    raw      TEXT NOT NULL,
    reason   TEXT NOT NULL,
    PRIMARY KEY (batch_id, line)
);

-- Which batch last touched each series, so later runs can tell what changed.
CREATE TABLE series_batches (
    series_id INTEGER NOT NULL REFERENCES series(id),
    batch_id  INTEGER NOT NULL REFERENCES import_batches(id),
    rows      INTEGER NOT NULL,
    PRIMARY KEY (series_id, batch_id)
) WITHOUT ROWID;

-- Readings with station and variable, and t as ISO 8601 UTC text.
CREATE VIEW readings_view AS
SELECT s.station_id                                   AS station_id,
       st.name                                        AS station_name,
       s.variable                                     AS variable,
       s.unit                                         AS unit,
       r.series_id                                    AS series_id,
       r.t                                            AS t,
       strftime('%Y-%m-%dT%H:%M:%SZ', r.t, 'unixepoch') AS time_utc,
       r.value                                        AS value,
       r.qualifier                                    AS qualifier
FROM readings r
JOIN series s ON s.id = r.series_id
JOIN stations st ON st.id = s.station_id;
