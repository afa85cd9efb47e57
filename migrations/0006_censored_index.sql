-- 0006: a partial index of the censored readings, so that counting them
-- (the check before user SQL hands readings.value to a function that does
-- not handle censoring) reads only those rows.
CREATE INDEX readings_censored ON readings(censored) WHERE censored IS NOT NULL;
