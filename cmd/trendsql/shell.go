package main

import (
	"bufio"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"

	"github.com/chzyer/readline"
	"github.com/spf13/cobra"

	"trendsql/store"
)

// shellHelp lists the shell's own commands. They start with a colon, which
// no SQL statement can start with.
const shellHelp = `Statements end with ';' and may span several lines.
Shell commands (one per line, not ended by ';'):
  :tables             list the tables and views of the store
  :columns NAME       list the columns of a table or view (NAME or schema.NAME)
  :format [FORMAT]    show or set the result format: table, csv, json or fields
  :out FILE           send the next results to FILE (format from its extension
                      .csv, .json or .txt, else the current one); :out alone cancels
  :out --force FILE   the same, replacing FILE if it exists (as --out with --force)
  :functions [TEXT]   list trendsql's SQL functions (only those mentioning TEXT;
                      a TEXT none mentions is an error naming the closest names)
  :help               show this list
  :quit               leave the shell (Ctrl-D does too)`

type shellOptions struct {
	write         bool
	unsafePragmas bool
	format        string
}

func init() { register(newShellCmd) }

func newShellCmd(e *env) *cobra.Command {
	o := shellOptions{}
	c := &cobra.Command{
		Use:   "shell",
		Short: "Interactive SQL on the store, with line editing and history (read-only unless --write)",
		Long: `Run SQL statements against the store interactively. Statements end with ';'
and may span several lines; results are printed as a table (or CSV, JSON or
one field per line), or sent to a file with :out.
Lines starting with ':' are shell commands; ':help' lists them.

When standard input is not a terminal, statements are read from it without
prompts, e.g.  echo 'SELECT count(*) FROM stations;' | trendsql shell
A failing statement prints its error and the shell carries on; piped input
then ends with exit code 1.

History is kept in the user cache directory (trendsql/history).
The store is opened read-only unless --write is given.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runShell(cmd.Context(), e, o) },
	}
	c.Flags().BoolVar(&o.write, "write", false, "open the store writable so statements may change it")
	e.addWaitFlag(c)
	c.Flags().BoolVar(&o.unsafePragmas, "allow-unsafe-pragmas", false, unsafePragmasUsage)
	c.Flags().StringVar(&o.format, "format", FormatTable, "initial result format: "+formatNames)
	return c
}

// runShell opens the store and reads statements from e.in: with line editing
// and history on a terminal, without prompts otherwise.
func runShell(ctx context.Context, e *env, o shellOptions) error {
	if !validFormat(o.format) {
		return usageErr("shell: --format must be %s, got %q", formatNames, o.format)
	}
	if o.unsafePragmas && !o.write {
		return usageErr("shell: --allow-unsafe-pragmas needs --write")
	}
	if err := e.checkWait("shell"); err != nil {
		return err
	}
	s, err := e.openForSQL(ctx, o.write, o.unsafePragmas)
	if err != nil {
		return err
	}
	defer s.Close()
	// A writable session starts only once no other writer holds the store
	// (saying so while it waits), as query --write does; a read-only one
	// never waits.
	if err := s.AwaitWriter(ctx); err != nil {
		return fmt.Errorf("shell: %w", err)
	}
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	sh := &shell{conn: conn, store: s, out: e.out, errw: e.errw, format: o.format, ctx: ctx}
	if file, ok := e.in.(*os.File); ok && readline.IsTerminal(int(file.Fd())) {
		return sh.interactive(file)
	}
	return sh.piped(e.in)
}

// shell runs statements on one connection, so transactions and temporary
// tables last across statements.
type shell struct {
	ctx       context.Context
	conn      *sql.Conn
	store     *store.Store
	out, errw io.Writer
	format    string
	outFile   string // :out: the next results go to this file
	outForce  bool   // :out --force: outFile may replace an existing file
	tty       bool
	ran       int // statements and commands run
	failed    int // of which failed
}

var errQuit = errors.New("quit")

// piped reads statements from a non-terminal input without prompts.
func (sh *shell) piped(in io.Reader) error {
	sc := bufio.NewScanner(in)
	sc.Buffer(make([]byte, 64*1024), 16*1024*1024)
	var buf strings.Builder
	lineNo, bufLine := 0, 0
	for sc.Scan() {
		lineNo++
		line := sc.Text()
		if buf.Len() == 0 {
			if isShellCommand(line) {
				if err := sh.command(line); err != nil {
					if errors.Is(err, errQuit) {
						return sh.result()
					}
					fmt.Fprintf(sh.errw, "input line %d: %v\n", lineNo, err)
				}
				continue
			}
			bufLine = lineNo
		}
		buf.WriteString(line)
		buf.WriteByte('\n')
		if statementComplete(buf.String()) {
			sh.run(sh.ctx, buf.String(), bufLine)
			buf.Reset()
		}
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("shell: reading input: %w", err)
	}
	// A last statement without its ';' is still run.
	if strings.TrimSpace(buf.String()) != "" {
		sh.run(sh.ctx, buf.String(), bufLine)
	}
	return sh.result()
}

func (sh *shell) result() error {
	if sh.failed > 0 {
		return &exitError{code: ExitFailed, err: fmt.Errorf("shell: %d of %d statements or commands failed", sh.failed, sh.ran)}
	}
	return nil
}

// interactive runs the line-editing loop on a terminal.
func (sh *shell) interactive(in *os.File) error {
	sh.tty = true
	name := filepath.Base(sh.store.Path)
	mode := "read-only"
	if !sh.store.ReadOnly {
		mode = "writable"
	}
	prompt := fmt.Sprintf("%s %s › ", name, map[bool]string{true: "ro", false: "rw"}[sh.store.ReadOnly])
	cont := strings.Repeat(" ", len([]rune(prompt))-2) + "┆ "
	rl, err := readline.NewEx(&readline.Config{
		Prompt:          prompt,
		HistoryFile:     historyFile(),
		HistoryLimit:    5000,
		InterruptPrompt: "^C",
		EOFPrompt:       "",
		Stdin:           in,
		Stdout:          sh.out,
		Stderr:          sh.errw,
	})
	if err != nil {
		return fmt.Errorf("shell: %w", err)
	}
	defer rl.Close()
	fmt.Fprintf(sh.out, "trendsql shell on %s (%s). End statements with ';'. :help lists shell commands, :quit leaves.\n", sh.store.Path, mode)
	var buf strings.Builder
	for {
		if buf.Len() == 0 {
			rl.SetPrompt(prompt)
		} else {
			rl.SetPrompt(cont)
		}
		line, err := rl.Readline()
		if errors.Is(err, readline.ErrInterrupt) {
			if buf.Len() == 0 {
				fmt.Fprintln(sh.errw, "(:quit or Ctrl-D leaves the shell)")
			}
			buf.Reset()
			continue
		}
		if errors.Is(err, io.EOF) {
			fmt.Fprintln(sh.out)
			return nil
		}
		if err != nil {
			return fmt.Errorf("shell: %w", err)
		}
		if buf.Len() == 0 {
			if strings.TrimSpace(line) == "" {
				continue
			}
			if isShellCommand(line) {
				if err := sh.command(line); err != nil {
					if errors.Is(err, errQuit) {
						return nil
					}
					fmt.Fprintln(sh.errw, "error:", err)
				}
				continue
			}
		}
		buf.WriteString(line)
		buf.WriteByte('\n')
		if statementComplete(buf.String()) {
			sh.runInterruptible(buf.String())
			buf.Reset()
		}
	}
}

// runInterruptible runs statements so that Ctrl-C cancels the running
// statement and returns to the prompt instead of ending the shell.
func (sh *shell) runInterruptible(text string) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	sig := make(chan os.Signal, 1)
	signal.Notify(sig, os.Interrupt)
	defer signal.Stop(sig)
	go func() {
		select {
		case <-sig:
			cancel()
		case <-ctx.Done():
		}
	}()
	sh.run(ctx, text, 0)
}

// historyFile is where the shell keeps its history; "" (no history) when the
// cache directory cannot be made.
func historyFile() string {
	dir, err := os.UserCacheDir()
	if err != nil {
		return ""
	}
	dir = filepath.Join(dir, "trendsql")
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return ""
	}
	return filepath.Join(dir, "history")
}

func isShellCommand(line string) bool { return strings.HasPrefix(strings.TrimSpace(line), ":") }

// run executes every statement of text, printing results and errors.
// firstLine (>0 for piped input) is the input line the text starts on, so
// error positions count lines of the whole input.
func (sh *shell) run(ctx context.Context, text string, firstLine int) {
	if firstLine > 1 {
		text = strings.Repeat("\n", firstLine-1) + text
	}
	for _, st := range splitStatements(text) {
		sh.ran++
		if err := sh.runOne(ctx, text, st); err != nil {
			sh.failed++
			if ctx.Err() != nil {
				err = errors.New("statement cancelled")
			}
			if firstLine > 0 {
				fmt.Fprintf(sh.errw, "input line %d: %v\n", 1+strings.Count(text[:st.offset], "\n"), err)
			} else {
				fmt.Fprintln(sh.errw, "error:", err)
			}
		}
	}
}

func (sh *shell) runOne(ctx context.Context, text string, st statement) error {
	writable := !sh.store.ReadOnly
	var before int64
	if writable {
		before, _ = store.TotalChanges(ctx, sh.conn)
	}
	prepared, err := sh.store.PrepareUser(ctx, sh.conn, st.text)
	if err != nil {
		return sqlError(ctx, sh.conn, text, st, err)
	}
	defer prepared.Close()
	rows, err := prepared.QueryContext(ctx)
	if err != nil {
		return sqlError(ctx, sh.conn, text, st, err)
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		return sqlError(ctx, sh.conn, text, st, err)
	}
	if len(cols) == 0 {
		// A statement without a result (INSERT, CREATE, BEGIN...): step it.
		for rows.Next() {
		}
		if err := rows.Err(); err != nil {
			return sqlError(ctx, sh.conn, text, st, err)
		}
		rows.Close()
		reported := writable && reportChanges(ctx, sh.conn, sh.errw, 0, 1, st.text, before)
		if sh.tty && !reported {
			fmt.Fprintln(sh.out, "ok")
		}
		return nil
	}
	if sh.outFile != "" {
		err = sh.writeToFile(rows)
	} else {
		_, err = writeRows(sh.out, rows, sh.output())
	}
	if err != nil {
		return sqlError(ctx, sh.conn, text, st, err)
	}
	rows.Close()
	if writable {
		reportChanges(ctx, sh.conn, sh.errw, 0, 1, st.text, before)
	}
	return nil
}

// output is how results go to the screen: the current format, fitted to
// the terminal's width when there is one.
func (sh *shell) output() outputOptions {
	return outputOptions{format: sh.format, width: terminalWidth(sh.out)}
}

// refuseStoreFile refuses a results file that is the store or its journal
// (checked when :out names it and again when the results are written).
func (sh *shell) refuseStoreFile(path string) error {
	if isStoreFile(path, sh.store.Path) {
		return fmt.Errorf(":out: %s is the store itself (or its journal); results never replace it, --force or not", path)
	}
	return nil
}

// writeToFile sends one result set to the file named by :out, in the
// format its extension names (else the current format), and goes back to
// the screen for the next results.
func (sh *shell) writeToFile(rows rowSource) error {
	path, force := sh.outFile, sh.outForce
	sh.outFile, sh.outForce = "", false
	format := formatForFile(path, sh.format, false)
	if format == "" {
		format = sh.format
	}
	if err := sh.refuseStoreFile(path); err != nil {
		return err
	}
	f, err := createResultFile(path, force)
	if err != nil {
		return fmt.Errorf(":out: %w", err)
	}
	n, err := writeRows(f, rows, outputOptions{format: format})
	if err != nil {
		f.abort()
		return err
	}
	if err := f.commit(); err != nil {
		return fmt.Errorf(":out: %w", err)
	}
	fmt.Fprintf(sh.errw, "%s written to %s (%s)\n", plural(n, "row", "rows"), path, format)
	return nil
}

// command runs one shell command line.
func (sh *shell) command(line string) error {
	sh.ran++
	err := sh.dispatch(line)
	if err != nil && !errors.Is(err, errQuit) {
		sh.failed++
	}
	if errors.Is(err, errQuit) {
		sh.ran--
	}
	return err
}

func (sh *shell) dispatch(line string) error {
	fields := strings.Fields(strings.TrimSpace(line))
	name, args := strings.ToLower(fields[0]), fields[1:]
	ctx := sh.ctx
	if sh.tty {
		ctx = context.Background()
	}
	wantArgs := func(fewest, most int) error {
		if len(args) < fewest || len(args) > most {
			return fmt.Errorf("%s: wrong number of arguments (see :help)", name)
		}
		return nil
	}
	switch name {
	case ":help":
		fmt.Fprintln(sh.out, shellHelp)
	case ":quit":
		return errQuit
	case ":tables":
		if err := wantArgs(0, 0); err != nil {
			return err
		}
		rows, err := store.TablesQuery(ctx, sh.conn)
		if err != nil {
			return err
		}
		defer rows.Close()
		_, err = writeRows(sh.out, rows, sh.output())
		return err
	case ":columns":
		if err := wantArgs(1, 1); err != nil {
			return err
		}
		schema, table := splitQualified(args[0])
		rows, err := store.ColumnsQuery(ctx, sh.conn, schema, table)
		if err != nil {
			return fmt.Errorf(":columns: %w", err)
		}
		defer rows.Close()
		_, err = writeRows(sh.out, rows, sh.output())
		return err
	case ":out":
		force := len(args) > 0 && args[0] == "--force"
		if force {
			args = args[1:]
		}
		if err := wantArgs(0, 1); err != nil {
			return err
		}
		if force && len(args) == 0 {
			return fmt.Errorf(":out --force: name the file to write (see :help)")
		}
		if len(args) == 0 {
			sh.outFile, sh.outForce = "", false
			return nil
		}
		if strings.HasPrefix(args[0], "-") {
			return fmt.Errorf(":out: unknown option %s (:out --force FILE replaces an existing FILE)", args[0])
		}
		if err := sh.refuseStoreFile(args[0]); err != nil {
			return err
		}
		if st, err := os.Stat(args[0]); err == nil {
			if st.IsDir() {
				return fmt.Errorf(":out: %s is a directory", args[0])
			}
			if !force {
				return fmt.Errorf(":out: %s exists; choose another file or replace it with :out --force %s", args[0], args[0])
			}
		}
		sh.outFile, sh.outForce = args[0], force
	case ":format":
		if err := wantArgs(0, 1); err != nil {
			return err
		}
		if len(args) == 0 {
			fmt.Fprintf(sh.out, "format: %s\n", sh.format)
			return nil
		}
		f := strings.ToLower(args[0])
		if !validFormat(f) {
			return fmt.Errorf(":format: expected %s, got %q", formatNames, args[0])
		}
		sh.format = f
	case ":functions":
		rows := functionRows(strings.Join(args, " "))
		if len(rows.rows) == 0 && len(args) > 0 {
			return fmt.Errorf(":functions: %s", noFunctionMessage(strings.Join(args, " ")))
		}
		_, err := writeRows(sh.out, rows, sh.output())
		return err
	default:
		return fmt.Errorf("unknown shell command %s (:help lists them)", fields[0])
	}
	return nil
}

// splitQualified splits "schema.name" into its parts, each optionally
// quoted with double quotes, square brackets, backticks or single quotes; a
// name without a dot outside quotes has schema "".
func splitQualified(s string) (schema, name string) {
	unquote := func(p string) string { return strings.Trim(p, `"'[]`+"`") }
	quote := byte(0)
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case quote != 0:
			if c == quote || (quote == '[' && c == ']') {
				quote = 0
			}
		case c == '"' || c == '\'' || c == '`' || c == '[':
			quote = c
		case c == '.':
			return unquote(s[:i]), unquote(s[i+1:])
		}
	}
	return "", unquote(s)
}
