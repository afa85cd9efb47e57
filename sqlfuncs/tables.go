package sqlfuncs

// Table-valued functions.
//
// The modules are the driver's own virtual-table support
// (modernc.org/sqlite/vtab: Module, Table, Cursor, RegisterModule). What
// that support cannot do in v1.62.0 is make a module eponymous: SQLite
// offers a module as a table-valued function only when its xCreate is
// absent or the same function as its xConnect, and the driver always
// installs two different trampolines (vtabCreateTrampoline,
// vtabConnectTrampoline in its vtab.go), with no option to change that. So
// each table-valued function is registered as a module named
// "<name>_module", and every connection opened through OpenDB gets
// "temp.<name>" created USING that module. Its declared schema has the
// function arguments as HIDDEN columns, so `FROM t, name(t.col)` works as
// with SQLite's own table-valued functions.
//
// The temp tables cannot be created from a driver connection hook: the
// driver runs hooks before it installs the modules on a new connection, so
// CREATE VIRTUAL TABLE would fail with "no such module". OpenDB therefore
// wraps the driver in a driver.Connector that creates them right after the
// driver has opened (and fully set up) each connection. Connections opened
// with plain sql.Open("sqlite", ...) have every scalar and aggregate
// function but not the table-valued ones. (Patching the driver's module
// structure through rawsqlite could make it eponymous, but the public-API
// fallback would still need this connector, so there would be two
// mechanisms instead of one.)

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"fmt"
	"sort"
	"strings"
	"sync"

	"modernc.org/sqlite/vtab"
)

// tableDef is a table-valued function: schema is the CREATE TABLE statement
// declared to SQLite (argument columns HIDDEN), nargs the number of hidden
// argument columns (they are the last columns), and rows produces the output
// rows (without the hidden columns) for the given arguments.
type tableDef struct {
	doc    Doc
	schema string
	ncols  int // visible columns
	nargs  int
	rows   func(args []driver.Value) ([][]driver.Value, error)
}

// defineTable records a table-valued function for registration.
func defineTable(t tableDef) {
	registryMu.Lock()
	defer registryMu.Unlock()
	if registered {
		panic("sqlfuncs: defineTable after Register: " + t.doc.Name)
	}
	if _, dup := definitions[t.doc.Name]; dup {
		panic("sqlfuncs: duplicate function " + t.doc.Name)
	}
	if _, dup := tables[t.doc.Name]; dup {
		panic("sqlfuncs: duplicate function " + t.doc.Name)
	}
	tables[t.doc.Name] = t
}

func registerTables() error {
	for name, t := range tables {
		if err := vtab.RegisterModule(nil, name+"_module", &tfModule{def: t}); err != nil {
			return fmt.Errorf("register table-valued function %s: %w", name, err)
		}
	}
	return nil
}

// tableNames returns the names of the table-valued functions, sorted.
func tableNames() []string {
	registryMu.Lock()
	defer registryMu.Unlock()
	names := make([]string, 0, len(tables))
	for name := range tables {
		names = append(names, name)
	}
	sort.Strings(names)
	return names
}

var (
	driverOnce sync.Once
	sqliteDrv  driver.Driver
)

// sqliteDriver returns the driver registered as "sqlite" (sql.Open does not
// connect, so this opens nothing).
func sqliteDriver() driver.Driver {
	driverOnce.Do(func() {
		db, err := sql.Open("sqlite", "")
		if err != nil {
			panic("sqlfuncs: the sqlite driver is not registered: " + err.Error())
		}
		sqliteDrv = db.Driver()
		db.Close()
	})
	return sqliteDrv
}

// OpenDB registers the functions (Register) and returns a database handle
// on the "sqlite" driver for dsn whose every connection also has the
// table-valued functions. Use it instead of sql.Open("sqlite", dsn).
func OpenDB(dsn string) (*sql.DB, error) {
	if err := Register(); err != nil {
		return nil, err
	}
	return OpenDBWith(dsn, nil)
}

// ConnSetup prepares one new driver connection after the table-valued
// functions exist on it (e.g. installs an authorizer). An error discards
// the connection.
type ConnSetup func(ctx context.Context, conn driver.Conn) error

// OpenDBWith is OpenDB with setup run on every new connection.
func OpenDBWith(dsn string, setup ConnSetup) (*sql.DB, error) {
	if err := Register(); err != nil {
		return nil, err
	}
	return sql.OpenDB(&tfConnector{dsn: dsn, drv: sqliteDriver(), names: tableNames(), setup: setup}), nil
}

type tfConnector struct {
	dsn   string
	drv   driver.Driver
	names []string
	setup ConnSetup
}

func (c *tfConnector) Driver() driver.Driver { return c.drv }

// Connect opens a connection and creates the temp tables of the table-valued
// functions on it. A read-only connection (PRAGMA query_only) has the pragma
// lifted for the duration: the temp schema is private to the connection and
// the database file is not written.
func (c *tfConnector) Connect(ctx context.Context) (driver.Conn, error) {
	conn, err := c.connect(ctx)
	if err != nil || c.setup == nil {
		return conn, err
	}
	if err := c.setup(ctx, conn); err != nil {
		conn.Close()
		return nil, err
	}
	return conn, nil
}

func (c *tfConnector) connect(ctx context.Context) (driver.Conn, error) {
	conn, err := c.drv.Open(c.dsn)
	if err != nil || len(c.names) == 0 {
		return conn, err
	}
	ex, ok := conn.(driver.ExecerContext)
	qr, ok2 := conn.(driver.QueryerContext)
	if !ok || !ok2 {
		conn.Close()
		return nil, fmt.Errorf("sqlfuncs: the sqlite driver connection cannot execute statements")
	}
	queryOnly, err := pragmaInt(ctx, qr, "PRAGMA query_only")
	if err != nil {
		conn.Close()
		return nil, err
	}
	stmts := []string{}
	if queryOnly != 0 {
		stmts = append(stmts, "PRAGMA query_only = 0")
	}
	for _, name := range c.names {
		stmts = append(stmts, fmt.Sprintf("CREATE VIRTUAL TABLE IF NOT EXISTS temp.%s USING %s_module", name, name))
	}
	if queryOnly != 0 {
		stmts = append(stmts, "PRAGMA query_only = 1")
	}
	for _, q := range stmts {
		if _, err := ex.ExecContext(ctx, q, nil); err != nil {
			conn.Close()
			return nil, fmt.Errorf("create table-valued functions (%s): %w", strings.Join(c.names, ", "), err)
		}
	}
	return conn, nil
}

func pragmaInt(ctx context.Context, qr driver.QueryerContext, q string) (int64, error) {
	rows, err := qr.QueryContext(ctx, q, nil)
	if err != nil {
		return 0, err
	}
	defer rows.Close()
	dest := make([]driver.Value, len(rows.Columns()))
	if err := rows.Next(dest); err != nil || len(dest) == 0 {
		return 0, fmt.Errorf("%s: no result", q)
	}
	v, _ := dest[0].(int64)
	return v, nil
}

type tfModule struct{ def tableDef }

func (m *tfModule) Create(ctx vtab.Context, args []string) (vtab.Table, error) {
	return m.Connect(ctx, args)
}

func (m *tfModule) Connect(ctx vtab.Context, args []string) (vtab.Table, error) {
	if err := ctx.Declare(m.def.schema); err != nil {
		return nil, fmt.Errorf("%s: declare schema: %w", m.def.doc.Name, err)
	}
	return &tfTable{def: m.def}, nil
}

type tfTable struct{ def tableDef }

// BestIndex requires an equality constraint on every hidden argument column
// and passes them, in column order, to Filter.
func (t *tfTable) BestIndex(info *vtab.IndexInfo) error {
	have := make([]int, t.def.nargs) // constraint index per arg, -1 if none
	for i := range have {
		have[i] = -1
	}
	for i, c := range info.Constraints {
		arg := c.Column - t.def.ncols
		if arg < 0 || arg >= t.def.nargs || c.Op != vtab.OpEQ || !c.Usable {
			continue
		}
		have[arg] = i
	}
	mask := 0
	for a, ci := range have {
		if ci >= 0 {
			mask |= 1 << a
		}
	}
	if mask != (1<<t.def.nargs)-1 {
		// Not all arguments bound: make this plan very expensive so that
		// SQLite picks one that binds them, and fail in Filter otherwise.
		info.EstimatedCost = 1e30
		info.IdxNum = int64(mask)
		return nil
	}
	for a, ci := range have {
		info.Constraints[ci].ArgIndex = a
		info.Constraints[ci].Omit = true
	}
	info.IdxNum = int64(mask)
	info.EstimatedCost = 10
	info.EstimatedRows = 50
	return nil
}

func (t *tfTable) Open() (vtab.Cursor, error) { return &tfCursor{def: t.def}, nil }
func (t *tfTable) Disconnect() error          { return nil }
func (t *tfTable) Destroy() error             { return nil }

type tfCursor struct {
	def  tableDef
	args []driver.Value
	rows [][]driver.Value
	i    int
}

func (c *tfCursor) Filter(idxNum int, idxStr string, vals []vtab.Value) (err error) {
	defer recoverInto(c.def.doc.Name, &err)
	if idxNum != (1<<c.def.nargs)-1 {
		return tableArgsMissing(c.def)
	}
	c.args = make([]driver.Value, len(vals))
	for i, v := range vals {
		switch x := v.(type) {
		case []byte:
			c.args[i] = append([]byte(nil), x...)
		default:
			c.args[i] = x
		}
	}
	c.rows, err = c.def.rows(c.args)
	c.i = 0
	return err
}

func (c *tfCursor) Next() error { c.i++; return nil }
func (c *tfCursor) Eof() bool   { return c.i >= len(c.rows) }
func (c *tfCursor) Column(col int) (vtab.Value, error) {
	if col >= c.def.ncols {
		return c.args[col-c.def.ncols], nil
	}
	return c.rows[c.i][col], nil
}
func (c *tfCursor) Rowid() (int64, error) { return int64(c.i + 1), nil }
func (c *tfCursor) Close() error          { return nil }
