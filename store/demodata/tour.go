package demodata

// TourStep is one example query of the demo tour: a one-line explanation in
// plain words and the SQL, shown with its result by `trendsql demo`. The
// README quotes the same steps.
type TourStep struct {
	Explain string
	SQL     string
	// Needs lists trendsql SQL functions the step calls; the step is shown
	// only when the binary registers all of them.
	Needs []string
	// Unless lists functions whose presence makes the step redundant (a
	// later step shows the same thing better); the step is then left out.
	Unless []string
}

// TourCaution closes the tour.
const TourCaution = "Statistical trends are not causal findings; agency procedures and qualified review govern decisions."

// Tour is the demo tour, in order. TourFor picks the steps a binary can run.
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
		Explain: "Nitrate samples of a manually read well: ISO 8601 UTC times, flags kept verbatim (∅ = no flag).",
		SQL: `SELECT station_id, time_utc, value, unit, qualifier
FROM readings_view
WHERE station_id = 'VOR-M07' AND variable = 'nitrate_n'
ORDER BY t DESC
LIMIT 6;`,
	},
	{
		Explain: "A river gauge's seasonal cycle: mean stage by calendar month.",
		SQL: `SELECT strftime('%m', t, 'unixepoch') AS month,
       round(avg(value), 3)              AS mean_stage_m,
       count(*)                          AS readings
FROM readings_view
WHERE station_id = 'VOR-G04'
GROUP BY month
ORDER BY month;`,
	},
	{
		Explain: "Straight-line slope of each logged well in m per year, steepest first (no seasonal or noise model).",
		SQL: `SELECT s.station_id,
       json_extract(st.metadata, '$.aquifer')  AS aquifer,
       json_extract(st.metadata, '$.land_use') AS land_use,
       round(regr_slope(r.value, r.t) * 31557600, 3) AS m_per_year,
       count(*) AS readings
FROM readings_view r
JOIN series s    ON s.id = r.series_id
JOIN stations st ON st.id = s.station_id
WHERE s.variable = 'groundwater_level'
  AND json_extract(st.metadata, '$.station_type') = 'groundwater_well'
GROUP BY s.id
ORDER BY m_per_year
LIMIT 8;`,
		Unless: []string{"trend_fit"},
	},
	{
		Explain: "Site metadata joins like any column: mean straight-line slope of the well levels by land use.",
		SQL: `WITH slopes AS (
  SELECT s.station_id, regr_slope(r.value, r.t) * 31557600 AS m_per_year
  FROM readings_view r JOIN series s ON s.id = r.series_id
  WHERE s.variable = 'groundwater_level'
  GROUP BY s.id)
SELECT json_extract(st.metadata, '$.land_use') AS land_use,
       count(*)                                AS wells,
       round(avg(m_per_year), 3)               AS mean_m_per_year,
       round(min(m_per_year), 3)               AS min_m_per_year
FROM slopes JOIN stations st ON st.id = slopes.station_id
GROUP BY land_use
ORDER BY mean_m_per_year;`,
		Unless: []string{"trend_fit"},
	},
	{
		Explain: "Well trends with two seasonal harmonics fitted, beside the straight line; hac_p allows for autocorrelation.",
		SQL: `WITH fits AS (
  SELECT s.station_id,
         regr_slope(r.value, r.t) * 31557600                 AS straight_line,
         trend_fit(r.t, r.value, 'period=1y, harmonics=2')   AS fit
  FROM readings_view r JOIN series s ON s.id = r.series_id
  WHERE s.variable = 'groundwater_level'
  GROUP BY s.id)
SELECT f.station_id,
       json_extract(st.metadata, '$.aquifer')  AS aquifer,
       json_extract(st.metadata, '$.land_use') AS land_use,
       round(f.straight_line, 3)               AS straight_m_yr,
       round(f.fit ->> '$.slope_per_year', 3)  AS seasonal_fit_m_yr,
       CASE WHEN f.fit ->> '$.hac_p' < 0.0001 THEN '< 0.0001'
            ELSE printf('%.4f', f.fit ->> '$.hac_p') END AS hac_p
FROM fits f JOIN stations st ON st.id = f.station_id
WHERE json_extract(st.metadata, '$.station_type') = 'groundwater_well'
ORDER BY seasonal_fit_m_yr
LIMIT 8;`,
		Needs: []string{"trend_fit"},
	},
	{
		Explain: "Dependence left in those residuals: lag-1 sample ACF and Ljung–Box over 10 daily lags (small p = evidence of dependence).",
		SQL: `WITH models AS (
  SELECT series_id, trend_fit(t, value, 'period=1y, harmonics=2') AS model
  FROM readings_view
  WHERE series_id IN (SELECT id FROM series
                      WHERE station_id IN ('VOR-W03', 'VOR-W09', 'VOR-W16', 'VOR-W20'))
  GROUP BY series_id),
resid AS (
  SELECT r.series_id, r.t, trend_residual(m.model, r.t, r.value) AS e
  FROM readings_view r JOIN models m USING (series_id)),
lb AS (
  SELECT series_id,
         sample_acf(t, e, 1)          AS acf1,
         ljung_box(t, e, 10) ->> '$.q' AS q,
         ljung_box_p(t, e, 10)        AS p
  FROM resid GROUP BY series_id)
SELECT s.station_id,
       round(lb.acf1, 3) AS resid_acf1,
       round(lb.q)       AS ljung_box_q,
       CASE WHEN lb.p < 0.0001 THEN '< 0.0001' ELSE printf('%.4f', lb.p) END AS p
FROM lb JOIN series s ON s.id = lb.series_id
ORDER BY s.station_id;`,
		Needs: []string{"trend_fit", "trend_residual", "sample_acf", "ljung_box", "ljung_box_p"},
	},
	{
		Explain: "Monthly manual readings: Mann–Kendall test and Theil–Sen slope per year with its 95% interval.",
		SQL: `WITH k AS (
  SELECT s.station_id, s.variable, s.unit,
         mann_kendall(r.t, r.value) AS mk,
         sen_slope(r.t, r.value)    AS sen
  FROM readings_view r JOIN series s ON s.id = r.series_id
  WHERE s.station_id IN ('VOR-M02', 'VOR-M03', 'VOR-M05', 'VOR-M07')
  GROUP BY s.id)
SELECT station_id, variable, unit,
       mk ->> '$.n'                         AS n,
       round(sen ->> '$.slope_per_year', 3) AS sen_per_year,
       round(sen ->> '$.lower', 3) || ' to ' || round(sen ->> '$.upper', 3) AS interval_95,
       round(mk ->> '$.tau', 3)             AS tau,
       CASE WHEN mk ->> '$.p' < 0.0001 THEN '< 0.0001'
            ELSE printf('%.4f', mk ->> '$.p') END AS p
FROM k
ORDER BY station_id, variable;`,
		Needs: []string{"mann_kendall", "sen_slope"},
	},
	{
		Explain: "VOR-W09 got a new sensor (date in its metadata): mean level in the year before and the year after.",
		SQL: `WITH w AS (
  SELECT r.t, r.value,
         unixepoch(json_extract(st.metadata, '$.sensor_replaced')) AS swap
  FROM readings_view r
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
		Explain: "Pettitt's change-point test on VOR-W09's deseasonalised levels, beside the replacement date on record.",
		SQL: `WITH w AS (
  SELECT r.t, r.value FROM readings_view r JOIN series s ON s.id = r.series_id
  WHERE s.station_id = 'VOR-W09'),
m AS (
  SELECT trend_fit(t, value, 'degree=0, period=1y, harmonics=2') AS model FROM w),
pt AS (
  SELECT pettitt(w.t, trend_residual(m.model, w.t, w.value)) AS p FROM w, m)
SELECT json_extract(st.metadata, '$.sensor_replaced')  AS replaced_on_record,
       substr(pt.p ->> '$.t_change', 1, 10)            AS pettitt_change,
       round((pt.p ->> '$.median_after') - (pt.p ->> '$.median_before'), 3) AS median_shift_m
FROM pt, stations st
WHERE st.id = 'VOR-W09';`,
		Needs: []string{"pettitt", "trend_fit", "trend_residual"},
	},
}

// TourFor returns the tour steps a binary with the given functions shows.
func TourFor(have func(name string) bool) []TourStep {
	var out []TourStep
	for _, st := range Tour {
		ok := true
		for _, n := range st.Needs {
			ok = ok && have(n)
		}
		for _, n := range st.Unless {
			ok = ok && !have(n)
		}
		if ok {
			out = append(out, st)
		}
	}
	return out
}
