package main

import (
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// Version is the trendsql release; set with -ldflags "-X main.Version=...".
var Version = "0.1.0-dev"

// versionString is the tool version recorded in reports and summary runs.
func versionString() string {
	v := Version
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "vcs.revision" && len(s.Value) >= 12 {
				v += "+" + s.Value[:12]
			}
		}
	}
	return v
}

func init() { register(newVersionCmd) }

func newVersionCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print the trendsql version",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return runVersion(e) },
	}
}

// runVersion prints the version line.
func runVersion(e *env) error {
	_, err := fmt.Fprintln(e.out, versionLine())
	return err
}

// versionLine is the release, Go, SQLite driver and platform.
func versionLine() string {
	sqliteVersion := "?"
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, d := range bi.Deps {
			if d.Path == "modernc.org/sqlite" {
				sqliteVersion = d.Version
			}
		}
	}
	return fmt.Sprintf("trendsql %s (%s, modernc.org/sqlite %s, %s/%s)", versionString(), runtime.Version(), sqliteVersion, runtime.GOOS, runtime.GOARCH)
}
