package runner

import (
	"runtime/debug"
	"testing"
)

// TestBuildFactsFromBinary: the microarchitecture level recorded in the audit log comes
// from the binary's build information, whatever GOAMD64 holds in the environment of the
// run (a binary built for v1 once recorded v3 because the variable was set).
func TestBuildFactsFromBinary(t *testing.T) {
	var built string
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == "GOAMD64" {
				built = s.Value
			}
		}
	}
	env := "v4"
	if built == env {
		env = "v2"
	}
	t.Setenv("GOAMD64", env)
	rec := Tool().Record("", 0)
	if rec.GOAMD64 != built {
		t.Errorf("recorded goamd64 %q with GOAMD64=%s in the environment, want the build's %q", rec.GOAMD64, env, built)
	}
}
