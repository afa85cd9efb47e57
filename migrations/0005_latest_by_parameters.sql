-- 0005: "latest" means latest for the same parameters. A run's parameter
-- set is its parameters JSON without the series selection (stations,
-- variables, where): the model, the window and the test settings.
--
-- latest_series_summaries_by_parameters: for each series and parameter set,
-- the summary from the latest successful run with that set.
-- latest_series_summaries: the rows of that view whose parameter set is the
-- one of the latest successful run, so it never mixes models; series the
-- latest set has not covered are absent from it (their rows stay in the
-- by-parameters view).
DROP VIEW latest_series_summaries;

CREATE VIEW latest_series_summaries_by_parameters AS
SELECT s.station_id, s.variable, r.started_at AS run_started_at,
       json_remove(r.parameters, '$.stations', '$.variables', '$.where') AS run_parameters,
       ss.*
FROM series_summaries ss
JOIN summary_runs r ON r.id = ss.run_id AND r.status = 'ok'
JOIN series s ON s.id = ss.series_id
WHERE ss.run_id = (
    SELECT max(ss2.run_id)
    FROM series_summaries ss2
    JOIN summary_runs r2 ON r2.id = ss2.run_id AND r2.status = 'ok'
    WHERE ss2.series_id = ss.series_id
      AND json_remove(r2.parameters, '$.stations', '$.variables', '$.where')
        = json_remove(r.parameters, '$.stations', '$.variables', '$.where')
);

CREATE VIEW latest_series_summaries AS
SELECT *
FROM latest_series_summaries_by_parameters
WHERE run_parameters = (
    SELECT json_remove(parameters, '$.stations', '$.variables', '$.where')
    FROM summary_runs
    WHERE status = 'ok'
    ORDER BY id DESC
    LIMIT 1
);
