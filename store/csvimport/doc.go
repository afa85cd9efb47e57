// Package csvimport imports stations and readings from delimited text
// files into a trendsql store.
//
// Both imports read the whole file inside ONE transaction: either the batch
// is recorded in import_batches together with its counts and every rejected
// row in import_rejects, or (on an I/O error, a cancelled context, a
// duplicate under OnDuplicate "error" or a database error) nothing changes.
//
// Accounting, the same for both kinds: every data record (non-blank line or
// multi-line quoted record after the header) is read, and ends up in exactly
// one of stored, rejected or duplicate, so
//
//	rows_read = rows_stored + rows_rejected + rows_duplicate
//
// rows_replaced counts the duplicates that overwrote what was there before
// (so rows_replaced <= rows_duplicate); rows_censored counts the stored rows
// that carry a censoring mark (<= rows_stored) and rows_missing the rejected
// rows whose value cell was a declared missing-value marker (<=
// rows_rejected).
//
// Readings (ImportReadings):
//   - Columns are found by header name (case-insensitive, surrounding blanks
//     ignored): station (StationCol, default "station"), time (TimeCol,
//     default "time"), value (ValueCol, default "value"), qualifier
//     (QualifierCol; default "qualifier" when the header has it), and the
//     variable either from a column (VariableCol; default "variable" when the
//     header has it and no fixed Variable is given) or fixed for the whole
//     file (Variable). Other columns are ignored.
//   - Station id, variable and time are trimmed of surrounding blanks; the
//     qualifier text is stored exactly as in the file, an empty cell as NULL.
//   - A station that is not in the stations table is created with its id
//     only (its other fields can be filled later by a stations import, which
//     merges) and counted in ImportResult.StationsCreated.
//   - A series (station, variable) is created as needed with Unit. If the
//     stored series has no unit, Unit fills it; if it has a different unit,
//     every row of that series is rejected with the reason "unit conflict".
//   - Times are parsed by timefmt.ParseTime; zone-less local times are
//     resolved in the TZ location (timefmt.ParseZone: a zone name or a fixed
//     offset; default UTC), and a local time that does not exist or exists
//     twice in that zone is rejected.
//   - Values: a decimal number (optional sign, digits, point, exponent), or
//     with DecimalComma a comma instead of the point (then a point is not
//     accepted: no thousands separators). Empty, NA, NaN, infinite, hex or
//     other non-numeric text is rejected with the reason; nothing is ever
//     turned into a number by guessing. A value cell matching one of
//     MissingValues exactly is rejected with the reason "declared
//     missing-value marker" (checked before anything else in the row).
//   - Censored values: '<' or '>' before the number ('<5', '< 5', '<0,05'
//     with DecimalComma) stores the number with the mark in
//     readings.censored; so does a remark '<' or '>' in the CensorCol column
//     (a remark that disagrees with the value's own mark, or any other
//     remark text, rejects the row). With NoCensored such rows are rejected
//     with a reason that says they are censored.
//   - Duplicates: a (series, time) that is already stored, or that appears
//     earlier in the same file, is a duplicate. OnDuplicate "error" (the
//     default) fails the whole import naming both places; "keep-first" keeps
//     the reading that was there first and counts the row as duplicate;
//     "replace" counts the row as duplicate and, when its value or qualifier
//     differs from the reading there, overwrites that reading and counts
//     the row as replaced too (re-importing an unchanged file with replace
//     therefore replaces nothing and marks no series as changed). Every row
//     dropped by keep-first and every reading overwritten by replace gets a
//     row in import_duplicates with the kept and the dropped value and
//     mark, the line and the batch.
//   - The same file again: when the file's SHA-256 equals that of an
//     earlier finished readings batch, OnDuplicate "error" fails with an
//     AlreadyImportedError naming that batch (for a regular file before
//     anything is read; for standard input at its end), and the other
//     policies import it and report the batch in ImportResult.SameFileBatch.
//   - series_batches gets one row per series whose readings this batch
//     changed (stored or replaced), with that number of rows.
//
// Stations (ImportStations): see ImportStations.
//
// Rejected rows go to import_rejects with the source line number (of the
// record's first line), the raw record text (cut at 64 KiB) and the reason.
// Blank lines are skipped: they offer no row.
package csvimport
