package runner

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"rankplan/internal/infile/infiletest"
)

// TestFolderEntries: a run folder holds the files its log names and no other. An extra
// regular file fails integrity naming it, unless --allow-extra accepts it as a warning; a
// symbolic link (even to a file of the folder), a folder, a pipe or a socket fails with
// --allow-extra too, and so does a link in place of a file the log names. In a folder
// whose run was stopped, the files its writer had made before their records are left
// as warnings, and the folder is incomplete, not tampered with.
func TestFolderEntries(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	lines := strings.SplitAfter(string(must(os.ReadFile(filepath.Join(rec.Dir, AuditFile)))), "\n")
	// stop leaves the folder as a run stopped after its first n records does, marked.
	stop := func(n int) func(t *testing.T, dir string) string {
		return func(t *testing.T, dir string) string {
			marked := dir + ".incomplete-0a1b2c3d"
			if err := os.Rename(dir, marked); err != nil {
				t.Fatal(err)
			}
			os.Remove(filepath.Join(marked, HeadFile))
			if err := os.WriteFile(filepath.Join(marked, AuditFile), []byte(strings.Join(lines[:n], "")), 0o644); err != nil {
				t.Fatal(err)
			}
			return marked
		}
	}
	write := func(name string) func(t *testing.T, dir string) string {
		return func(t *testing.T, dir string) string {
			if err := os.WriteFile(filepath.Join(dir, name), []byte("notes\n"), 0o644); err != nil {
				t.Fatal(err)
			}
			return dir
		}
	}
	kind := func(name, kind string) func(t *testing.T, dir string) string {
		return func(t *testing.T, dir string) string {
			infiletest.Make(t, filepath.Join(dir, name), kind, must(os.ReadFile(filepath.Join(rec.Dir, ReportFile))), 0)
			return dir
		}
	}
	then := func(steps ...func(t *testing.T, dir string) string) func(t *testing.T, dir string) string {
		return func(t *testing.T, dir string) string {
			for _, s := range steps {
				dir = s(t, dir)
			}
			return dir
		}
	}
	const notNamed = " is not named by the run's record: a run folder holds only the files its log names (verify --allow-extra accepts extra regular files, as warnings)"
	const accepted = " is not named by the run's record; accepted as an extra regular file (--allow-extra)"
	const notRegular = ", not a regular file: a run folder holds regular files only"
	for _, tc := range []struct {
		name       string
		setup      func(t *testing.T, dir string) string
		allowExtra bool
		outcome    Class
		verdict    Verdict // of the check that names file
		file       string
		detail     string // the start of its detail
	}{
		{"clean", func(t *testing.T, dir string) string { return dir }, false, Verified, Pass, "", "the folder holds the files the log names and no other"},
		{"extra file", write("notes.txt"), false, ClassIntegrity, Fail, "notes.txt", "notes.txt" + notNamed},
		{"extra file allowed", write("notes.txt"), true, Verified, Warn, "notes.txt", "notes.txt" + accepted},
		{"hidden extra file", write(".notes"), false, ClassIntegrity, Fail, ".notes", ".notes" + notNamed},
		{"name with a line break", write("a\nb"), false, ClassIntegrity, Fail, "a\nb", `"a\nb"` + notNamed},
		{"link to a file of the folder", func(t *testing.T, dir string) string {
			if err := os.Symlink(ResultsFile, filepath.Join(dir, "copy.json")); err != nil {
				t.Fatal(err)
			}
			return dir
		}, true, ClassIntegrity, Fail, "copy.json", "copy.json is a symbolic link (to results.json): a run folder holds regular files only, and a link is never followed or accepted"},
		{"link in place of an output", kind(ReportFile, "outside"), true, ClassIntegrity, Fail, ReportFile, "report.html is missing or unreadable: it is a symbolic link (to /"},
		{"pipe", kind("pipe", "pipe"), true, ClassIntegrity, Fail, "pipe", "pipe is a named pipe (FIFO)" + notRegular},
		{"folder", kind("sub", "dir"), true, ClassIntegrity, Fail, "sub", "sub is a directory" + notRegular},
		{"socket", kind("sock", "socket"), true, ClassIntegrity, Fail, "sock", "sock is a socket" + notRegular},
		{"link to /dev/zero", kind("zero", "zero"), true, ClassIntegrity, Fail, "zero", "zero is a symbolic link (to /dev/zero)"},
		{"too many entries", func(t *testing.T, dir string) string {
			for i := range maxFolderEntries {
				write(fmt.Sprintf("x%04d", i))(t, dir)
			}
			return dir
		}, true, ClassIntegrity, Fail, "", "the folder holds more than 1000 entries; a run folder holds only the files its log names"},
		// Stopped after exclusions.applied (record 4): the outputs exist, their records do not.
		{"stopped run", stop(4), false, ClassIncomplete, Warn, ResultsFile, "results.json is not named by the log: the stopped run wrote it before its record"},
		{"stopped run, temporary file", then(write(".pairs.csv.tmp-0123456789abcdef"), stop(10)), false, ClassIncomplete, Warn,
			".pairs.csv.tmp-0123456789abcdef", ".pairs.csv.tmp-0123456789abcdef is not named by the log: the stopped run wrote it before its record"},
		{"stopped run, extra file", then(write("notes.txt"), stop(10)), false, ClassIntegrity, Fail, "notes.txt", "notes.txt" + notNamed},
		{"stopped run, link", then(kind("zero", "zero"), stop(10)), true, ClassIntegrity, Fail, "zero", "zero is a symbolic link (to /dev/zero)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := tc.setup(t, copyDir(t, rec.Dir))
			r, err := boundedVerify(t, tc.name, dir, VerifyOptions{AllowExtra: tc.allowExtra})
			if err != nil {
				t.Fatal(err)
			}
			if r.Outcome != tc.outcome {
				t.Errorf("outcome %s, want %s: %+v", r.Outcome, tc.outcome, r.Checks)
			}
			found := false
			for _, c := range r.Checks {
				found = found || c.Verdict == tc.verdict && c.File == tc.file && strings.HasPrefix(c.Detail, tc.detail)
			}
			if !found {
				t.Errorf("no %s check of %q saying %q: %+v", tc.verdict, tc.file, tc.detail, r.Checks)
			}
		})
	}
}
