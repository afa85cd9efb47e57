-- 0002: stored per-series summaries (trendsql summarize).
-- A run is written in one transaction at its end; readers never see half of
-- one. Failed and interrupted runs keep their row (with the error) and no
-- results, and earlier results stay untouched.
CREATE TABLE summary_runs (
    id               INTEGER PRIMARY KEY,
    started_at       TEXT NOT NULL,
    finished_at      TEXT,
    status           TEXT NOT NULL CHECK (status IN ('running', 'ok', 'failed', 'interrupted')),
    error            TEXT,
    parameters       TEXT NOT NULL CHECK (json_valid(parameters)),
    tool_version     TEXT NOT NULL,
    batch_high_water INTEGER NOT NULL DEFAULT 0,   -- largest import batch id when the run started
    series_selected  INTEGER NOT NULL DEFAULT 0,
    series_computed  INTEGER NOT NULL DEFAULT 0,
    series_skipped   INTEGER NOT NULL DEFAULT 0,   -- unchanged under --changed-only
    series_with_notes    INTEGER NOT NULL DEFAULT 0
);

CREATE TABLE series_summaries (
    run_id               INTEGER NOT NULL REFERENCES summary_runs(id),
    series_id            INTEGER NOT NULL REFERENCES series(id),
    notes                TEXT,      -- why figures are missing or how they were computed, if unusual
    -- coverage
    n                    INTEGER NOT NULL,
    t_first              INTEGER,
    t_last               INTEGER,
    time_first           TEXT,      -- ISO 8601 UTC
    time_last            TEXT,
    years                REAL,      -- (t_last - t_first) / 365.25 d
    step_s               REAL,      -- inferred sampling step (most common spacing)
    grid_slots           INTEGER,
    missing_share        REAL,      -- empty grid slots / grid slots
    n_qualified          INTEGER,   -- readings carrying a qualifier flag
    qualifier_counts     TEXT CHECK (qualifier_counts IS NULL OR json_valid(qualifier_counts)),
    mean                 REAL,
    unit                 TEXT,
    -- least-squares trend with the run's seasonal model
    trend_model          TEXT CHECK (trend_model IS NULL OR json_valid(trend_model)),
    slope_per_year       REAL,
    slope_se             REAL,
    slope_p              REAL,
    hac_slope_se         REAL,
    hac_lags             INTEGER,
    hac_p                REAL,
    n_eff                REAL,
    n_eff_p              REAL,
    r2                   REAL,
    pct_per_decade       REAL,      -- 10 * slope_per_year / |mean| * 100
    -- rank-based trend
    mk_method            TEXT,      -- 'mann-kendall/hamed-rao', 'seasonal-kendall/block-means/hirsch-slack' or 'seasonal-kendall/block-means'
    mk_s                 REAL,
    mk_var_s             REAL,
    mk_z                 REAL,
    mk_p                 REAL,      -- unadjusted p of the rank trend test
    mk_tau               REAL,
    mk_correction_factor REAL,
    sen_slope_per_year   REAL,
    sen_lower            REAL,
    sen_upper            REAL,
    sen_confidence       REAL,
    trend_p_fdr          REAL,      -- Benjamini–Hochberg adjusted mk_p across the run's selected series
    -- residual dependence
    resid_acf1           REAL,
    acf_basis            TEXT,      -- 'time-grid' (lags in sampling steps) or 'reading-order' (irregular times: lags in readings)
    lb_lags              INTEGER,
    lb_df                INTEGER,
    lb_q                 REAL,
    lb_p                 REAL,
    -- single change point
    pettitt_k            INTEGER,
    pettitt_t_change     INTEGER,
    pettitt_time_change  TEXT,
    pettitt_u            REAL,
    pettitt_p            REAL,
    -- plain flags (0/1)
    insufficient_data     INTEGER NOT NULL CHECK (insufficient_data IN (0, 1)),
    trend_detected        INTEGER CHECK (trend_detected IN (0, 1)),
    residual_dependence   INTEGER CHECK (residual_dependence IN (0, 1)),
    step_change_suspected INTEGER CHECK (step_change_suspected IN (0, 1)),
    PRIMARY KEY (run_id, series_id)
) WITHOUT ROWID;

CREATE INDEX series_summaries_by_series ON series_summaries(series_id, run_id);

CREATE TABLE series_correlograms (
    run_id      INTEGER NOT NULL,
    series_id   INTEGER NOT NULL,
    lag         INTEGER NOT NULL,
    acvf        REAL,
    acf         REAL,
    pacf        REAL,
    band        REAL,     -- 1.96 / sqrt(n): approximate 95% band for a white-noise sample ACF
    ljung_box_q REAL,
    ljung_box_p REAL,
    PRIMARY KEY (run_id, series_id, lag),
    FOREIGN KEY (run_id, series_id) REFERENCES series_summaries(run_id, series_id)
) WITHOUT ROWID;

-- Each series' summary from its latest successful run, with station and variable.
CREATE VIEW latest_series_summaries AS
SELECT s.station_id, s.variable, r.started_at AS run_started_at, ss.*
FROM series_summaries ss
JOIN summary_runs r ON r.id = ss.run_id AND r.status = 'ok'
JOIN series s ON s.id = ss.series_id
WHERE ss.run_id = (
    SELECT max(ss2.run_id)
    FROM series_summaries ss2
    JOIN summary_runs r2 ON r2.id = ss2.run_id AND r2.status = 'ok'
    WHERE ss2.series_id = ss.series_id
);
