package benchmark

import "errors"

// ErrFileExists: a file the run would write is already in its directory
// and Options.Force is not set. The run writes nothing.
var ErrFileExists = errors.New("file exists and was not made by this run")

// WorkFiles names the files a run writes in its directory (and the
// command removes unless asked to keep them).
func WorkFiles() []string {
	var out []string
	for _, db := range []string{"bench.db", "import-scratch.db", "direct-scratch.db"} {
		for _, s := range []string{"", "-wal", "-shm", "-journal", ".summarize-lock"} {
			out = append(out, db+s)
		}
	}
	return append(out, "readings.csv")
}
