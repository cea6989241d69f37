package runner

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/rogpeppe/go-internal/txtar"
)

// fuzzVerifyLimit bounds one call of Verify in FuzzVerifyFolder: a call that has not
// returned by then fails the target like a panic (a hang on a pipe or a device would).
const fuzzVerifyLimit = 10 * time.Second

// FuzzVerifyFolder runs Verify on whole run folders decoded from txtar archives. The seed
// is a real run folder (the plan and data of testdata/fuzzfolder, run in the test) and
// variants of it; the fuzzer changes bytes, names and kinds of entries. An entry of the
// archive named
//
//	NAME           is a regular file NAME holding the entry's bytes
//	NAME -> TARGET is a symbolic link NAME to TARGET
//	NAME |         is a named pipe NAME
//	NAME/          is a folder NAME
//
// (NAME one element of a path; other entries are left out), and an archive whose comment
// is "incomplete" is unpacked into a folder named as a stopped run leaves it. Properties:
// Verify never panics, returns within fuzzVerifyLimit and without an error; every failed
// check has a class and the outcome is the worst of them; the report prints; and verify
// says "verified" only for the seed's own files: without --allow-extra exactly the seed's
// regular files with the seed's bytes, with --allow-extra those plus regular files only.
// No edit of a number, a record or a hash of the folder, and no link, pipe or folder in
// it, is ever verified.
func FuzzVerifyFolder(f *testing.F) {
	// The seed folder must be the same in every process of a fuzzing session (the worker
	// processes run this setup again), so the plan and data are at fixed paths and the
	// run folder is written under a relative name: nothing in it depends on a temporary
	// folder.
	planPath, err := filepath.Abs(filepath.Join("testdata", "fuzzfolder", "plan.yaml"))
	if err != nil {
		f.Fatal(err)
	}
	tmp := f.TempDir()
	runIn(f, tmp, func() {
		if _, err := Run(context.Background(), planPath, RunOptions{Out: "run", Now: clock(), Getenv: noEnv}); err != nil {
			f.Fatal(err)
		}
	})
	seed := folderArchive(f, filepath.Join(tmp, "run"))
	want := map[string][]byte{}
	for _, file := range txtar.Parse(seed).Files {
		want[file.Name] = file.Data
	}
	if r := verifyArchive(f, seed, VerifyOptions{}); r.Outcome != Verified {
		f.Fatalf("the seed folder does not verify: %+v", r.Checks)
	}
	f.Add(seed)
	edit := func(name string, change func([]byte) []byte) []byte {
		a := txtar.Parse(seed)
		for i := range a.Files {
			if a.Files[i].Name == name {
				a.Files[i].Data = change(bytes.Clone(a.Files[i].Data))
			}
		}
		return txtar.Format(a)
	}
	add := func(files ...txtar.File) []byte {
		a := txtar.Parse(seed)
		a.Files = append(a.Files, files...)
		return txtar.Format(a)
	}
	rename := func(from, to string) []byte {
		a := txtar.Parse(seed)
		for i := range a.Files {
			if a.Files[i].Name == from {
				a.Files[i].Name = to
			}
		}
		return txtar.Format(a)
	}
	f.Add(edit(ResultsFile, func(b []byte) []byte { return bytes.Replace(b, []byte(`"n": 4`), []byte(`"n": 5`), 1) }))
	f.Add(edit(PairsFile, func(b []byte) []byte { return bytes.Replace(b, []byte("0."), []byte("1."), 1) }))
	f.Add(edit(AuditFile, func(b []byte) []byte { return b[:bytes.IndexByte(b, '\n')+1] }))
	f.Add(rename(ResultsFile, ResultsFile+" -> /dev/zero"))
	f.Add(rename(AuditFile, AuditFile+" |"))
	f.Add(rename(HeadFile, HeadFile+" -> "+HeadFile))
	f.Add(add(txtar.File{Name: "notes.txt", Data: []byte("notes\n")}))
	f.Add(add(txtar.File{Name: SignatureFile + " -> /dev/urandom"}))
	f.Add(add(txtar.File{Name: "sub/"}, txtar.File{Name: "copy.json -> " + ResultsFile}))
	stopped := txtar.Parse(edit(AuditFile, func(b []byte) []byte { return b[:bytes.Index(b, []byte(`"output.written"`))] }))
	stopped.Comment = []byte("incomplete\n")
	f.Add(txtar.Format(stopped))

	f.Fuzz(func(t *testing.T, archive []byte) {
		plain := verifyArchive(t, archive, VerifyOptions{})
		extra := verifyArchive(t, archive, VerifyOptions{AllowExtra: true})
		for _, r := range []*VerifyReport{plain, extra} {
			for _, c := range r.Checks {
				if c.Verdict == Fail && c.Class == "" {
					t.Fatalf("a failed check without a class: %+v", c)
				}
			}
			if o := outcome(r.Checks); r.Outcome != o {
				t.Fatalf("outcome %s, but the checks give %s", r.Outcome, o)
			}
			if err := r.WriteText(io.Discard); err != nil {
				t.Fatal(err)
			}
			if err := r.WriteMarkdown(io.Discard); err != nil {
				t.Fatal(err)
			}
		}
		if plain.Outcome == Verified && extra.Outcome != Verified {
			t.Fatalf("verified, but not with --allow-extra: %+v", extra.Checks)
		}
		if plain.Outcome != Verified && extra.Outcome != Verified {
			return
		}
		got, special := unpackedEntries(t, archive)
		if special != "" {
			t.Fatalf("verified a folder holding %s", special)
		}
		for name, b := range want {
			if g, ok := got[name]; !ok || !bytes.Equal(g, b) {
				t.Fatalf("verified a folder whose %s differs from the seed's (present: %v)", name, ok)
			}
		}
		if plain.Outcome == Verified && len(got) != len(want) {
			t.Fatalf("verified without --allow-extra a folder of %d files; the seed has %d", len(got), len(want))
		}
	})
}

// runIn runs do in the folder dir and goes back to the working folder. (With F.Chdir,
// which also sets PWD for the whole target, the worker processes of fuzzing did not start.)
func runIn(t testing.TB, dir string, do func()) {
	t.Helper()
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.Chdir(dir); err != nil {
		t.Fatal(err)
	}
	defer func() {
		if err := os.Chdir(wd); err != nil {
			t.Fatal(err)
		}
	}()
	do()
}

// folderArchive packs the regular files of the folder dir into a txtar archive.
func folderArchive(t testing.TB, dir string) []byte {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var a txtar.Archive
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		a.Files = append(a.Files, txtar.File{Name: e.Name(), Data: b})
	}
	return txtar.Format(&a)
}

// verifyArchive unpacks archive into a new folder and verifies it with opt, failing t if
// Verify does not return within fuzzVerifyLimit or returns an error.
func verifyArchive(t testing.TB, archive []byte, opt VerifyOptions) *VerifyReport {
	t.Helper()
	dir := unpack(t, archive)
	type result struct {
		r   *VerifyReport
		err error
	}
	done := make(chan result, 1)
	go func() {
		r, err := Verify(context.Background(), dir, opt)
		done <- result{r, err}
	}()
	select {
	case res := <-done:
		if res.err != nil {
			t.Fatalf("verify: %v", res.err)
		}
		return res.r
	case <-time.After(fuzzVerifyLimit):
		t.Fatalf("verify did not return within %v", fuzzVerifyLimit)
		return nil
	}
}

// unpack makes the folder an archive describes (see FuzzVerifyFolder) in a new temporary
// folder and returns its path.
func unpack(t testing.TB, archive []byte) string {
	t.Helper()
	a := txtar.Parse(archive)
	dir := filepath.Join(t.TempDir(), "run")
	if strings.TrimSpace(string(a.Comment)) == "incomplete" {
		dir += ".incomplete-0a1b2c3d"
	}
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	for i, file := range a.Files {
		if i == 64 {
			break
		}
		// A name given twice keeps its first entry: each kind of entry is created only
		// where nothing is yet, and a failure leaves the entry out.
		name, target, isLink := strings.Cut(file.Name, " -> ")
		switch {
		case isLink && localName(name):
			os.Symlink(target, filepath.Join(dir, name))
		case strings.HasSuffix(name, " |") && localName(strings.TrimSuffix(name, " |")):
			syscall.Mkfifo(filepath.Join(dir, strings.TrimSuffix(name, " |")), 0o644)
		case strings.HasSuffix(name, "/") && localName(strings.TrimSuffix(name, "/")):
			os.Mkdir(filepath.Join(dir, strings.TrimSuffix(name, "/")), 0o755)
		case !isLink && localName(name):
			if w, err := os.OpenFile(filepath.Join(dir, name), os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644); err == nil {
				w.Write(file.Data)
				w.Close()
			}
		}
	}
	return dir
}

// localName reports whether name is one element of a path, usable as a file name.
func localName(name string) bool {
	return name != "" && name != "." && name != ".." && !strings.ContainsAny(name, "/\x00")
}

// unpackedEntries unpacks archive again and returns its regular files with their bytes,
// and the name and kind of one entry that is not a regular file ("" if none).
func unpackedEntries(t testing.TB, archive []byte) (map[string][]byte, string) {
	t.Helper()
	dir := unpack(t, archive)
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	files := map[string][]byte{}
	special := ""
	for _, e := range entries {
		if !e.Type().IsRegular() {
			special = e.Name() + " (" + e.Type().String() + ")"
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		files[e.Name()] = b
	}
	return files, special
}
