package runner

import (
	"os"
	"runtime"
	"runtime/debug"
	"sync"

	"rankplan/runner/audit"
	"rankplan/runner/folder"
	"rankplan/schemas"
)

// Version is rankplan's release version.
const Version = "0.2.0-dev"

// ToolInfo identifies the running build of rankplan.
type ToolInfo struct {
	Version   string
	Revision  string // VCS revision the binary was built from, "" when unknown
	Modified  bool   // the work tree had uncommitted changes at build time
	GoVersion string
	GOOS      string
	GOARCH    string
}

// Tool reads the build information that the Go toolchain embeds in the binary.
func Tool() ToolInfo {
	t := ToolInfo{Version: Version, GoVersion: runtime.Version(), GOOS: runtime.GOOS, GOARCH: runtime.GOARCH}
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				t.Revision = s.Value
			case "vcs.modified":
				t.Modified = s.Value == "true"
			}
		}
	}
	return t
}

// RevisionText writes the revision for people: "unknown" when the build has none (as with
// `go run` or test binaries), and a "+modified" mark for builds of an edited tree.
func (t ToolInfo) RevisionText() string {
	if t.Revision == "" {
		return "unknown (built without version control information)"
	}
	if t.Modified {
		return t.Revision + "+modified"
	}
	return t.Revision
}

// Record is the build's identity as the audit log records it (in run.started and
// selftest.started), with the executable's SHA-256 and size from [Executable].
func (t ToolInfo) Record(exe string, exeSize int64) folder.Tool {
	return folder.Tool{
		Name: "rankplan", Version: t.Version, Revision: t.Revision, Modified: t.Modified,
		ExecutableSHA256: exe, ExecutableBytes: exeSize,
		Go: t.GoVersion, GOOS: t.GOOS, GOARCH: t.GOARCH, GOAMD64: goamd64(),
	}
}

// startRunWork starts, each on its own goroutine, the work of a run that does not depend
// on its inputs and would otherwise wait for them: hashing the executable (about 20 MB,
// for run.started) and compiling the results schema (for results.json). Both happen once
// per process; whoever needs the result first waits for the work started here. A run that
// fails before it needs them leaves them to finish unused.
func startRunWork() {
	go Executable()
	go schemas.Results()
}

// Executable returns the SHA-256 and size of the running executable ("" and 0 when it
// cannot be read). The executable is hashed once per process.
func Executable() (digest string, size int64) {
	e := executable()
	return e.digest, e.size
}

var executable = sync.OnceValue(func() (e struct {
	digest string
	size   int64
}) {
	path, err := os.Executable()
	if err != nil {
		return e
	}
	e.digest, e.size, _ = audit.DigestFile(path)
	return e
})
