// Command trendsql keeps trend and dependence analysis of station readings
// next to the data: a pure-Go SQLite store with SQL functions for trend
// fitting, residuals, sample autocovariance and Ljung–Box.
//
// Layout of this package: root.go builds the command tree and holds what
// every command shares (streams, store opening, exit codes); each command
// lives in its own file (init.go, query.go, shell.go, import.go, …) as an
// options struct, a run function that tests call directly, and a cobra
// constructor that registers itself from init(); output.go renders result
// sets; errors.go words the store's typed errors with this program's flags.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"regexp"
	"runtime/pprof"
	"strings"
	"syscall"
)

func main() { os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }

// Main runs the CLI and returns the process exit code. Errors are printed
// once, on one line, prefixed by the program name.
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
	err = wordUnknownCommand(err)
	var ee *exitError
	if !errors.As(err, &ee) && isBusyError(err) {
		err = &exitError{code: ExitNothing, err: wordBusyError(err)}
	}
	fmt.Fprintln(errw, "trendsql:", err)
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
	file, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if errors.Is(err, os.ErrExist) {
		return nil, fmt.Errorf("%s: %s exists; it is never overwritten (remove it or name a new file)", EnvCPUProfile, path)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", EnvCPUProfile, err)
	}
	if err := pprof.StartCPUProfile(file); err != nil {
		file.Close()
		return nil, fmt.Errorf("%s: %w", EnvCPUProfile, err)
	}
	return func() { pprof.StopCPUProfile(); file.Close() }, nil
}

// cobraUnknownRE reads cobra's unknown-command error: `unknown command "x"
// for "trendsql import"`, then suggestions on lines of their own.
var cobraUnknownRE = regexp.MustCompile(`^unknown command ("[^"]*") for "([^"]*)"`)

// wordUnknownCommand puts cobra's unknown-command error on one line without
// the program name (Main prints it once) and with its suggestions, e.g.
// unknown command "querry" (did you mean query?), and where to find the list.
func wordUnknownCommand(err error) error {
	first, rest, _ := strings.Cut(err.Error(), "\n")
	m := cobraUnknownRE.FindStringSubmatch(first)
	if m == nil {
		return err
	}
	msg := "unknown command " + m[1]
	if _, sub, ok := strings.Cut(m[2], " "); ok {
		msg = sub + ": " + msg
	}
	var near []string
	for _, l := range strings.Split(rest, "\n") {
		if l = strings.TrimSpace(l); l != "" && !strings.HasSuffix(l, "?") {
			near = append(near, l)
		}
	}
	if len(near) > 0 {
		msg += " (did you mean " + strings.Join(near, " or ") + "?)"
	}
	return &usageMarker{fmt.Errorf("%s; see `%s --help`", msg, m[2])}
}
