//go:build !(cgo && trendsqlext)

package main

import (
	"fmt"
	"os"
)

func main() {
	fmt.Fprintln(os.Stderr, "trendsqlext is a SQLite extension library; build it with:\n  go build -tags trendsqlext -buildmode=c-shared -o trendsql.so ./cmd/trendsqlext")
	os.Exit(2)
}
