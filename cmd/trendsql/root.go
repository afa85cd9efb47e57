package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/pprof"
	"strings"
	"syscall"

	"github.com/spf13/cobra"

	"trendsql/store"
)

// Exit codes (documented in README.md).
const (
	ExitOK      = 0 // success
	ExitFailed  = 1 // the command ran and failed (bad input, SQL error, failed run)
	ExitUsage   = 2 // bad flags or arguments
	ExitNothing = 3 // nothing to do, or the store is busy with another run
)

// exitError carries an exit code through cobra.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

func usageErr(format string, a ...any) error {
	return &exitError{code: ExitUsage, err: fmt.Errorf(format, a...)}
}

// env is what every command gets: its streams and the global flags.
type env struct {
	in     io.Reader
	out    io.Writer
	errw   io.Writer
	dbFlag string
}

func (e *env) dbPath() string { return store.ResolvePath(e.dbFlag) }

func (e *env) open(ctx context.Context, readOnly bool) (*store.Store, error) {
	s, err := store.Open(ctx, e.dbPath(), store.Options{ReadOnly: readOnly})
	return s, wordOpenError(err)
}

// openForSQL opens the store for SQL typed by the user (query, shell):
// read-only unless write; with write, the PRAGMAs that switch off a safety
// of the store stay refused unless unsafePragmas.
func (e *env) openForSQL(ctx context.Context, write, unsafePragmas bool) (*store.Store, error) {
	s, err := store.Open(ctx, e.dbPath(), store.Options{ReadOnly: !write, UserSQL: write, AllowUnsafePragmas: unsafePragmas})
	return s, wordOpenError(err)
}

// Main runs the CLI and returns the process exit code.
func Main(args []string, in io.Reader, out, errw io.Writer) int {
	e := &env{in: in, out: out, errw: errw}
	root := newRootCmd(e)
	root.SetArgs(args)
	root.SetIn(in)
	root.SetOut(out)
	root.SetErr(errw)
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if path := os.Getenv(EnvCPUProfile); path != "" {
		stopProfile, err := startCPUProfile(path)
		if err != nil {
			fmt.Fprintln(errw, "trendsql:", err)
			return ExitFailed
		}
		defer stopProfile()
	}
	err := root.ExecuteContext(ctx)
	if err == nil {
		return ExitOK
	}
	fmt.Fprintln(errw, "trendsql:", err)
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	if isUsage(err) {
		return ExitUsage
	}
	return ExitFailed
}

// EnvCPUProfile names a file to receive a CPU profile of the whole command
// (for `go tool pprof`; a developer aid documented in DEVELOPERS.md).
const EnvCPUProfile = "TRENDSQL_CPUPROFILE"

func startCPUProfile(path string) (func(), error) {
	f, err := os.Create(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", EnvCPUProfile, err)
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		f.Close()
		return nil, fmt.Errorf("%s: %w", EnvCPUProfile, err)
	}
	return func() { pprof.StopCPUProfile(); f.Close() }, nil
}

// isUsage recognises cobra's own argument and flag errors, and its unknown
// subcommand error.
func isUsage(err error) bool {
	var u *usageMarker
	return errors.As(err, &u) || strings.HasPrefix(err.Error(), "unknown command ")
}

type usageMarker struct{ error }

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
	root.PersistentFlags().StringVar(&e.dbFlag, "db", "", "store path (default $"+store.EnvDB+", else ./"+store.DefaultPath+")")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &usageMarker{fmt.Errorf("%w (see `%s --help`)", err, c.CommandPath())}
	})
	root.AddCommand(
		newInitCmd(e),
		newQueryCmd(e),
		newFunctionsCmd(e),
		newVersionCmd(e),
	)
	for _, c := range extraCommands {
		root.AddCommand(c(e))
	}
	return root
}

// extraCommands lets each command file add itself from init(), so command
// files can be added without editing this one.
var extraCommands []func(*env) *cobra.Command

// exactArgs is cobra.ExactArgs with a usage exit code.
func exactArgs(n int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if len(args) != n {
			return usageErr("%s: expected %d argument(s), got %d (usage: %s)", cmd.CommandPath(), n, len(args), cmd.UseLine())
		}
		return nil
	}
}
