package rawsqlite

import (
	"os"
	"strings"
	"testing"
)

// go.mod must require exactly the versions the package was verified
// against: test binaries record no dependency versions, so this is where an
// upgrade is caught.
func TestVersionsPinned(t *testing.T) {
	b, err := os.ReadFile("../../go.mod")
	if err != nil {
		t.Fatal(err)
	}
	required := map[string]string{}
	for _, line := range strings.Split(string(b), "\n") {
		fields := strings.Fields(line)
		if len(fields) >= 1 && fields[0] == "require" {
			fields = fields[1:]
		}
		if len(fields) >= 2 {
			required[fields[0]] = fields[1]
		}
	}
	for _, m := range []struct{ path, verified string }{{SQLiteModule, SQLiteVersion}, {LibcModule, LibcVersion}} {
		got, ok := required[m.path]
		if !ok {
			t.Errorf("%s is not required in go.mod", m.path)
			continue
		}
		if got != m.verified {
			t.Errorf("go.mod requires %s %s but sqlfuncs/rawsqlite was verified against %s: re-verify it (see its package documentation) and update the constant", m.path, got, m.verified)
		}
	}
}

func TestCheckHonoursEnvVar(t *testing.T) {
	t.Setenv(EnvVar, "Off")
	if err := Check(); err == nil || err.Error() != EnvVar+"=off" {
		t.Fatalf("Check with %s=Off: %v", EnvVar, err)
	}
	if _, err := ConnOf(nil); err == nil {
		t.Fatal("ConnOf ignored the switch")
	}
}

func TestConnOfRejectsOtherTypes(t *testing.T) {
	t.Setenv(EnvVar, "")
	type conn struct {
		db  uintptr
		tls *int
	}
	for _, v := range []any{nil, 42, &conn{db: 1, tls: new(int)}, &struct{}{}} {
		if _, err := ConnOf(v); err == nil {
			t.Errorf("ConnOf(%T) accepted a value that is not the driver's connection", v)
		}
	}
}
