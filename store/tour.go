package store

// TourStep is one example query of the demo tour: a one-line explanation in
// plain words and the SQL, shown with its result by `trendsql demo`. The
// README quotes the same steps.
type TourStep struct {
	Explain string
	SQL     string
	// Needs lists trendsql SQL functions the step calls; a step is shown only
	// when the binary registers all of them.
	Needs []string
}

// TourCaution closes the tour.
const TourCaution = "Statistical trends are not causal findings; agency procedures and qualified review govern decisions."

// Tour is the demo tour, in order.
var Tour = []TourStep{
	{
		Explain: "What the store holds: stations, series and readings per station type.",
		SQL: `SELECT json_extract(st.metadata, '$.station_type') AS station_type,
       count(DISTINCT st.id)                      AS stations,
       count(DISTINCT s.id)                       AS series,
       sum(sb.rows)                               AS readings
FROM stations st
JOIN series s          ON s.station_id = st.id
JOIN series_batches sb ON sb.series_id = s.id
GROUP BY station_type
ORDER BY readings DESC;`,
	},
	{
		Explain: "Qualifier flags are kept verbatim from the source; unflagged readings show as ∅ (NULL).",
		SQL: `SELECT qualifier, count(*) AS readings
FROM readings
GROUP BY qualifier
ORDER BY readings DESC;`,
	},
	{
		Explain: "Manual dip readings come at irregular times; readings_view shows them with ISO 8601 UTC times.",
		SQL: `SELECT station_id, variable, time_utc, value, unit
FROM readings_view
WHERE station_id = 'VOR-M03' AND variable = 'groundwater_level'
ORDER BY t DESC
LIMIT 5;`,
	},
	{
		Explain: "Straight-line slope of every logged well in metres per year, steepest decline first (raw readings; seasonality and autocorrelation not modelled).",
		SQL: `SELECT s.station_id,
       json_extract(st.metadata, '$.aquifer')  AS aquifer,
       json_extract(st.metadata, '$.land_use') AS land_use,
       round(regr_slope(r.value, r.t) * 31557600, 3) AS m_per_year,
       count(*) AS readings
FROM readings r
JOIN series s    ON s.id = r.series_id
JOIN stations st ON st.id = s.station_id
WHERE s.variable = 'groundwater_level'
  AND json_extract(st.metadata, '$.station_type') = 'groundwater_well'
GROUP BY s.id
ORDER BY m_per_year
LIMIT 8;`,
	},
	{
		Explain: "Site metadata joins like any column: mean straight-line slope of the well levels by land use.",
		SQL: `WITH slopes AS (
  SELECT s.station_id, regr_slope(r.value, r.t) * 31557600 AS m_per_year
  FROM readings r JOIN series s ON s.id = r.series_id
  WHERE s.variable = 'groundwater_level'
  GROUP BY s.id)
SELECT json_extract(st.metadata, '$.land_use') AS land_use,
       count(*)                                AS wells,
       round(avg(m_per_year), 3)               AS mean_m_per_year,
       round(min(m_per_year), 3)               AS min_m_per_year
FROM slopes JOIN stations st ON st.id = slopes.station_id
GROUP BY land_use
ORDER BY mean_m_per_year;`,
	},
	{
		Explain: "Well VOR-W09 had its sensor replaced (date in its metadata): mean level in the year before and the year after.",
		SQL: `WITH w AS (
  SELECT r.t, r.value,
         unixepoch(json_extract(st.metadata, '$.sensor_replaced')) AS swap
  FROM readings r
  JOIN series s    ON s.id = r.series_id
  JOIN stations st ON st.id = s.station_id
  WHERE st.id = 'VOR-W09')
SELECT CASE WHEN t < swap THEN 'year before' ELSE 'year after' END AS period,
       round(avg(value), 3) AS mean_level_m,
       count(*)             AS days
FROM w
WHERE abs(t - swap) < 31557600
GROUP BY period
ORDER BY min(t);`,
	},
	{
		Explain: "Seasonal cycle of a river gauge: mean stage and number of readings by calendar month.",
		SQL: `SELECT strftime('%m', t, 'unixepoch') AS month,
       round(avg(value), 3)              AS mean_stage_m,
       count(*)                          AS readings
FROM readings_view
WHERE station_id = 'VOR-G04'
GROUP BY month
ORDER BY month;`,
	},
}

// TourFor returns the tour steps whose functions are all available.
func TourFor(have func(name string) bool) []TourStep {
	var out []TourStep
	for _, st := range Tour {
		ok := true
		for _, n := range st.Needs {
			if !have(n) {
				ok = false
			}
		}
		if ok {
			out = append(out, st)
		}
	}
	return out
}
