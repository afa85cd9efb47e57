package store

import (
	"context"
	"database/sql"
)

// Querier is what catalog queries run on: a *sql.DB, *sql.Conn or *sql.Tx.
type Querier interface {
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
}

// TablesQuery lists the tables and views of every attached schema (SQLite's
// own internal tables left out), with their column counts.
func TablesQuery(ctx context.Context, q Querier) (*sql.Rows, error) {
	return q.QueryContext(ctx, `SELECT name, type, ncol AS columns, schema
FROM pragma_table_list
WHERE name NOT LIKE 'sqlite\_%' ESCAPE '\'
ORDER BY schema = 'main' DESC, schema, type, name`)
}

// ColumnsQuery lists the columns of a table or view: position, name, declared
// type, NOT NULL, default and primary-key position. schema names the attached
// database ("" for the first that has the table: main, temp, then the
// attached ones, as SQLite resolves an unqualified name). It returns an error
// naming the table when there is no table or view of that name.
func ColumnsQuery(ctx context.Context, q Querier, schema, table string) (*sql.Rows, error) {
	var n int
	if err := q.QueryRowContext(ctx, `SELECT count(*) FROM pragma_table_list
WHERE name = ? COLLATE NOCASE AND (? = '' OR schema = ? COLLATE NOCASE)`, table, schema, schema).Scan(&n); err != nil {
		return nil, err
	}
	if n == 0 {
		return nil, &tableError{table: table, schema: schema}
	}
	if schema == "" {
		return q.QueryContext(ctx, columnsSQL+"(?) ORDER BY cid", table)
	}
	return q.QueryContext(ctx, columnsSQL+"(?, ?) ORDER BY cid", table, schema)
}

const columnsSQL = `SELECT cid + 1 AS position, name, type, "notnull" = 1 AS not_null,
       dflt_value AS default_value, pk AS primary_key_position
FROM pragma_table_xinfo`

// TotalChanges returns SQLite's total_changes() for the connection: rows
// inserted, updated or deleted since it opened. Run on a *sql.Conn.
func TotalChanges(ctx context.Context, q Querier) (int64, error) {
	var n int64
	err := q.QueryRowContext(ctx, `SELECT total_changes()`).Scan(&n)
	return n, err
}

// StationIDs lists the ids of the stored stations in order.
func StationIDs(ctx context.Context, q Querier) ([]string, error) {
	return stringColumn(ctx, q, `SELECT id FROM stations ORDER BY id`)
}

// Variables lists the distinct variables of the stored series in order.
func Variables(ctx context.Context, q Querier) ([]string, error) {
	return stringColumn(ctx, q, `SELECT DISTINCT variable FROM series ORDER BY variable`)
}

// SeriesRef is a stored series as a selection names it.
type SeriesRef struct {
	ID        int64
	StationID string
	Variable  string
}

// SeriesOf lists the series of the given stations (none: all), in station
// and variable order.
func SeriesOf(ctx context.Context, q Querier, stations []string) ([]SeriesRef, error) {
	query := `SELECT id, station_id, variable FROM series`
	args := make([]any, len(stations))
	if len(stations) > 0 {
		query += ` WHERE station_id IN (` + Placeholders(len(stations)) + `)`
		for i, s := range stations {
			args[i] = s
		}
	}
	rows, err := q.QueryContext(ctx, query+` ORDER BY station_id, variable, id`, args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []SeriesRef
	for rows.Next() {
		var r SeriesRef
		if err := rows.Scan(&r.ID, &r.StationID, &r.Variable); err != nil {
			return nil, err
		}
		out = append(out, r)
	}
	return out, rows.Err()
}

func stringColumn(ctx context.Context, q Querier, query string) ([]string, error) {
	rows, err := q.QueryContext(ctx, query)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var v string
		if err := rows.Scan(&v); err != nil {
			return nil, err
		}
		out = append(out, v)
	}
	return out, rows.Err()
}
