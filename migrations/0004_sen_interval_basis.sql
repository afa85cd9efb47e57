-- 0004: the variance behind each stored Sen interval. The interval is
-- computed from the variance of the rank test stored beside it, so that
-- "mk_p below alpha" and "the interval excludes 0" agree; these columns say
-- which variance that was.
ALTER TABLE series_summaries ADD COLUMN sen_interval_basis TEXT
    CHECK (sen_interval_basis IS NULL OR sen_interval_basis IN ('mann-kendall', 'hamed-rao', 'seasonal-kendall', 'hirsch-slack'));
ALTER TABLE series_summaries ADD COLUMN sen_var_s REAL;   -- the Var(S) the interval's ranks come from
