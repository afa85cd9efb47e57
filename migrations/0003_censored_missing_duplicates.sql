-- 0003: censored readings, declared missing values and duplicates on record.
-- Existing readings keep their values and are uncensored (censored NULL).

-- A censored reading stores its limit in value and the mark here:
-- '<' the true value is below value (a reporting limit), '>' above value
-- (a measuring limit); NULL for a measured value.
ALTER TABLE readings ADD COLUMN censored TEXT CHECK (censored IS NULL OR censored IN ('<', '>'));

-- Per batch: readings stored as censored, and cells matching a declared
-- missing-value marker (those rows are also listed in import_rejects).
ALTER TABLE import_batches ADD COLUMN rows_censored INTEGER NOT NULL DEFAULT 0;
ALTER TABLE import_batches ADD COLUMN rows_missing INTEGER NOT NULL DEFAULT 0;

-- Every reading dropped by keep-first or overwritten by replace: the value
-- that stays stored and the one that does not, with the offering line.
CREATE TABLE import_duplicates (
    batch_id         INTEGER NOT NULL REFERENCES import_batches(id),
    line             INTEGER NOT NULL,
    series_id        INTEGER NOT NULL REFERENCES series(id),
    t                INTEGER NOT NULL,
    policy           TEXT NOT NULL CHECK (policy IN ('keep-first', 'replace')),
    kept_value       REAL NOT NULL,
    kept_censored    TEXT,
    dropped_value    REAL NOT NULL,
    dropped_censored TEXT,
    PRIMARY KEY (batch_id, line)
) WITHOUT ROWID;

-- Censoring of each summarised series.
ALTER TABLE series_summaries ADD COLUMN censored_share REAL;       -- censored readings / n
ALTER TABLE series_summaries ADD COLUMN censoring_limits INTEGER;  -- distinct reporting limits
ALTER TABLE series_summaries ADD COLUMN highest_limit REAL;        -- largest reporting limit

-- readings_view shows a censored reading as reported ('<5'), so that the
-- numerical functions see the mark; value_number is the stored number (the
-- limit for a censored reading) and censored the mark.
DROP VIEW readings_view;
CREATE VIEW readings_view AS
SELECT s.station_id                                   AS station_id,
       st.name                                        AS station_name,
       s.variable                                     AS variable,
       s.unit                                         AS unit,
       r.series_id                                    AS series_id,
       r.t                                            AS t,
       strftime('%Y-%m-%dT%H:%M:%SZ', r.t, 'unixepoch') AS time_utc,
       CASE WHEN r.censored IS NULL THEN r.value
            ELSE r.censored || printf('%.15g', r.value) END AS value,
       r.qualifier                                    AS qualifier,
       r.censored                                     AS censored,
       r.value                                        AS value_number
FROM readings r
JOIN series s ON s.id = r.series_id
JOIN stations st ON st.id = s.station_id;
