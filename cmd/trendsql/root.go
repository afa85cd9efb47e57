package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"trendsql/store"
	"trendsql/store/demodata"
)

// Exit codes (documented in README.md).
const (
	ExitOK      = 0 // success
	ExitFailed  = 1 // the command ran and failed (bad input, SQL error, failed run)
	ExitUsage   = 2 // bad flags or arguments
	ExitNothing = 3 // nothing to do, or another writer held the store for longer than --wait
)

// exitError carries an exit code through cobra.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// usageErr is a usage error (exit code 2). By convention the message starts
// with the command's name ("query: …"), never with the program's name, which
// Main prints once in front of every error.
func usageErr(format string, a ...any) error {
	return &exitError{code: ExitUsage, err: fmt.Errorf(format, a...)}
}

// env is what every command gets: its streams and the global flags.
type env struct {
	in     io.Reader
	out    io.Writer
	errw   io.Writer
	dbFlag string
	// wait is --wait of the writable commands (see addWaitFlag).
	wait time.Duration
}

// DefaultWait is the default of --wait.
const DefaultWait = 10 * time.Second

// addWaitFlag adds --wait, shared by every command that writes the store:
// how long it waits for another writer (an import, a summary run, a
// query --write) before it gives up with exit code 3.
func (e *env) addWaitFlag(c *cobra.Command) {
	c.Flags().DurationVar(&e.wait, "wait", DefaultWait, "how long to wait for another writer of the store before giving up with exit code 3 (0 = do not wait)")
}

// checkWait refuses a negative --wait.
func (e *env) checkWait(cmdName string) error {
	if e.wait < 0 {
		return usageErr("%s: --wait must be 0 or a positive duration (e.g. 30s, 5m), got %s", cmdName, e.wait)
	}
	return nil
}

// storeWait is --wait as store.Options.Wait (which reads 0 as its default).
func (e *env) storeWait() time.Duration {
	if e.wait == 0 {
		return -1
	}
	return e.wait
}

// waitNotice says, once, that the command waits for another writer.
func (e *env) waitNotice(what, path string) func() {
	return func() {
		fmt.Fprintf(e.errw, "trendsql: waiting for %s to finish with %s (up to --wait %s)…\n", what, path, e.wait)
	}
}

func (e *env) dbPath() string { return store.ResolvePath(e.dbFlag) }

// open opens the store at the selected path, which must exist: only init
// and demo create a store, so a mistyped path fails instead of leaving an
// empty store behind.
func (e *env) open(ctx context.Context, readOnly bool) (*store.Store, error) {
	return e.openWith(ctx, store.Options{ReadOnly: readOnly})
}

func (e *env) openWith(ctx context.Context, opt store.Options) (*store.Store, error) {
	path := e.dbPath()
	if !opt.ReadOnly {
		opt.Wait, opt.OnWait = e.storeWait(), e.waitNotice("another writer", path)
	}
	if _, err := os.Stat(path); errors.Is(err, os.ErrNotExist) {
		return nil, wordOpenError(fmt.Errorf("open %s: %w", path, store.ErrNoStore))
	}
	s, err := store.Open(ctx, path, opt)
	return s, wordOpenError(err)
}

// create opens the store writable, creating it when it does not exist.
func (e *env) create(ctx context.Context) (*store.Store, error) {
	s, err := store.Open(ctx, e.dbPath(), store.Options{Wait: e.storeWait(), OnWait: e.waitNotice("another writer", e.dbPath())})
	return s, wordOpenError(err)
}

// warnIfDemo warns on stderr when s is the demo store: its readings are
// invented, and a user's own data belong in a store of their own. It
// reports whether it warned.
func (e *env) warnIfDemo(ctx context.Context, s *store.Store) bool {
	demo, err := demodata.IsDemo(ctx, s.DB)
	if err != nil || !demo {
		return false
	}
	fmt.Fprintf(e.errw, "warning: %s is the demo store built by `trendsql demo` (invented readings of an invented basin); keep your own data in a store of their own (`trendsql init --db FILE`)\n", s.Path)
	return true
}

// openForSQL opens the store for SQL typed by the user (query, shell):
// read-only unless write; with write, the PRAGMAs that switch off a safety
// of the store stay refused unless unsafePragmas.
func (e *env) openForSQL(ctx context.Context, write, unsafePragmas bool) (*store.Store, error) {
	return e.openWith(ctx, store.Options{ReadOnly: !write, UserSQL: write, AllowUnsafePragmas: unsafePragmas})
}

// commands holds the constructor of every subcommand. Each command's file
// adds its own from init(), so a new command is a new file and nothing else.
var commands []func(*env) *cobra.Command

// register adds a subcommand constructor to commands.
func register(newCmd func(*env) *cobra.Command) { commands = append(commands, newCmd) }

func newRootCmd(e *env) *cobra.Command {
	root := &cobra.Command{
		Use:   "trendsql",
		Short: "Trend and dependence analysis of station readings, in SQL, next to the data",
		Long: `trendsql keeps station readings in a SQLite store and adds SQL functions for
trend fits, residuals, sample autocovariance/autocorrelation by lag and
Ljung–Box tests, so each station's trend and residual dependence is one SQL
query away and results are stored next to the raw data.

Statistical trends are not causal findings; agency procedures and qualified
review govern decisions about water supply and flood risk.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	// --version prints what the version command prints.
	root.Version = versionString()
	root.SetVersionTemplate(versionLine() + "\n")
	root.Flags().Bool("version", false, "print the trendsql version (as the version command does)")
	root.PersistentFlags().StringVar(&e.dbFlag, "db", "", "store path (default $"+store.EnvDB+", else ./"+store.DefaultPath+")")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		if c.HasParent() {
			err = fmt.Errorf("%s: %w", commandName(c), err)
		}
		return &usageMarker{fmt.Errorf("%w (see `%s --help`)", err, c.CommandPath())}
	})
	// Without a command, the usage goes to stderr with exit code 2 (only
	// --help and `trendsql help` print it as a success).
	root.RunE = func(cmd *cobra.Command, args []string) error {
		return missingSubcommand(cmd, "name a command, e.g. `trendsql demo` or `trendsql query \"SELECT …\"`")
	}
	for _, newCmd := range commands {
		root.AddCommand(newCmd(e))
	}
	return root
}

// missingSubcommand is what a command that groups subcommands (the program
// itself, import) does when none is named: it prints its usage to stderr
// and returns a usage error (exit code 2) that says what to type.
func missingSubcommand(cmd *cobra.Command, what string) error {
	fmt.Fprint(cmd.ErrOrStderr(), cmd.UsageString())
	prefix := ""
	if cmd.HasParent() {
		prefix = commandName(cmd) + ": "
	}
	return usageErr("%sno command given: %s (see `%s --help`)", prefix, what, cmd.CommandPath())
}

// commandName is a command's path without the program name ("query",
// "import readings"), the prefix of its error messages.
func commandName(c *cobra.Command) string {
	return strings.TrimPrefix(c.CommandPath(), c.Root().Name()+" ")
}

// isUsage recognises cobra's own argument and flag errors, and its unknown
// subcommand error.
func isUsage(err error) bool {
	var u *usageMarker
	return errors.As(err, &u) || strings.HasPrefix(err.Error(), "unknown command ")
}

type usageMarker struct{ error }

// exactArgs is cobra.ExactArgs with a usage exit code.
func exactArgs(n int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if len(args) != n {
			return usageErr("%s: expected %d argument(s), got %d (usage: %s)", commandName(cmd), n, len(args), cmd.UseLine())
		}
		return nil
	}
}
