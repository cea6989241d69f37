package runner

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/internal/audittest"
	"rankplan/internal/infile/infiletest"
	"rankplan/runner/audit"
)

// Bounds of the tests of hostile files: each verify or run must end within readLimit
// and allocate less than allocLimit. A reader of /dev/zero allocates gigabytes in that
// time and one of a pipe never returns; a bounded one takes milliseconds and the memory
// of the folder's small files. Both bounds are generous on purpose: they tell bounded
// from unbounded reading, not fast from slow.
const (
	readLimit  = 2 * time.Second
	allocLimit = 64 << 20
)

// hugeSize is the size of the sparse "big" files: 1 TiB, past every limit.
const hugeSize = 1 << 40

// followed is what a reader of a file the user named (symbolic links followed, as by
// infile.Open) says of each hostile kind of file that infiletest makes; a "big" file is
// refused with the reader's limit.
var followed = map[string]string{
	"pipe":    "it is a named pipe (FIFO), not a regular file",
	"zero":    "it is a symbolic link to /dev/zero, which is a character device, not a regular file",
	"urandom": "it is a symbolic link to /dev/urandom, which is a character device, not a regular file",
	"loop":    "too many levels of symbolic links",
	"dir":     "it is a directory, not a regular file",
	"none":    "no such file or directory",
}

// followedKinds lists the kinds of followed, and "big" refused with limit.
func followedKinds(limit string) []struct{ kind, reason string } {
	out := []struct{ kind, reason string }{{"big", "it has 1099511627776 bytes, more than the limit of " + limit}}
	for _, k := range []string{"pipe", "zero", "urandom", "loop", "dir", "none"} {
		out = append(out, struct{ kind, reason string }{k, followed[k]})
	}
	return out
}

// hostileSignedRun makes a signed run (so that the folder holds signature.json) and
// returns the plan's path, the run and the public key's path.
func hostileSignedRun(t *testing.T) (string, *RunRecord, string) {
	t.Helper()
	key, rec := signedRun(t, t.TempDir())
	return rec.Prepared.Plan.File, rec, key + ".pub"
}

// boundedVerify runs Verify under the bounds of the hostile-file tests.
func boundedVerify(t *testing.T, what, dir string, opt VerifyOptions) (*VerifyReport, error) {
	t.Helper()
	var r *VerifyReport
	err := infiletest.Bounded(t, what, readLimit, allocLimit, func() error {
		var err error
		r, err = Verify(context.Background(), dir, opt)
		return err
	})
	return r, err
}

// TestVerifyHostileFolderFiles replaces each file verify reads from a run folder with
// each hostile kind of file: a named pipe, links to /dev/zero, to /dev/urandom, to itself
// and to an intact copy of the file outside the folder, and a 1 TiB sparse file. Verify
// must end at once with an integrity failure whose check names the file and says what it
// is, never wait on the pipe, follow a link or read the device or the huge file.
func TestVerifyHostileFolderFiles(t *testing.T) {
	_, rec, pub := hostileSignedRun(t)
	files := []string{AuditFile, HeadFile, ResultsFile, PlanCopyFile, ProvenanceFile, ReportFile, SummaryFile, PairsFile, SignatureFile}
	// What each check says before the reason.
	lead := map[string]string{AuditFile: "cannot read the audit log: ", HeadFile: "cannot read the head file: ", SignatureFile: "cannot read signature.json: "}
	// The limit a huge file passes.
	limit := map[string]string{AuditFile: "67108864 bytes (64 MiB)", HeadFile: "1024 bytes (1 KiB)", SignatureFile: "65536 bytes (64 KiB)"}
	for _, file := range files {
		content := must(os.ReadFile(filepath.Join(rec.Dir, file)))
		if lead[file] == "" {
			lead[file] = file + " is missing or unreadable: "
			limit[file] = "1073741824 bytes (1 GiB)"
		}
		for _, tc := range []struct{ kind, reason string }{
			{"pipe", "it is a named pipe (FIFO), not a regular file"},
			{"zero", "it is a symbolic link (to /dev/zero), not a regular file"},
			{"urandom", "it is a symbolic link (to /dev/urandom), not a regular file"},
			{"loop", "it is a symbolic link (to " + file + "), not a regular file"},
			{"outside", "it is a symbolic link (to /"}, // the copy's absolute path follows
			{"dir", "it is a directory, not a regular file"},
			{"socket", "it is a socket, not a regular file"},
			{"big", "it has 1099511627776 bytes, more than the limit of " + limit[file]},
		} {
			what := file + " as " + tc.kind
			dir := copyDir(t, rec.Dir)
			infiletest.Make(t, filepath.Join(dir, file), tc.kind, content, hugeSize)
			for _, opt := range []VerifyOptions{{}, {Head: rec.Head, PubKey: pub, AllowExtra: true}} {
				r, err := boundedVerify(t, what, dir, opt)
				if err != nil {
					t.Fatalf("%s: %v", what, err)
				}
				if r.Outcome != ClassIntegrity {
					t.Errorf("%s: outcome %s, want %s", what, r.Outcome, ClassIntegrity)
				}
				if !hasFailure(r, file, lead[file]+tc.reason) {
					t.Errorf("%s: no failed check of %s saying %q: %+v", what, file, lead[file]+tc.reason, r.Checks)
				}
				if hasCheck(r, "data file", Pass) || hasCheck(r, "data file", Fail) || hasCheck(r, "rerun", Pass) {
					t.Errorf("%s: the inputs were read or the plan rerun after an integrity failure: %+v", what, r.Checks)
				}
			}
		}
	}
}

// hasFailure reports whether a failed check names file and its detail starts with
// detail.
func hasFailure(r *VerifyReport, file, detail string) bool {
	for _, c := range r.Checks {
		if c.Verdict == Fail && c.File == file && strings.HasPrefix(c.Detail, detail) {
			return true
		}
	}
	return false
}

// TestVerifyHostileInputs replaces the plan and the data file that the log names, at
// their recorded paths, with each hostile kind. These paths were named by the user, so a
// link to a regular file is followed (and the unchanged copy outside verifies), but
// anything else is refused at once: the data as an input difference, the plan as not at
// hand (the copy in the folder is used).
func TestVerifyHostileInputs(t *testing.T) {
	planPath, rec := newRun(t, RunOptions{})
	dataPath := filepath.Join(filepath.Dir(planPath), "data.csv")
	kinds := append(followedKinds("4294967296 bytes (4 GiB)"), struct{ kind, reason string }{"outside", ""})
	for _, tc := range kinds {
		if tc.kind == "none" {
			continue // a kind of file that infiletest.Make does not make
		}
		for _, c := range []struct {
			path, check string
			verdict     Verdict
			class       Class
			detail      string
		}{
			{dataPath, "data file", Fail, ClassDiffer, "the data file " + dataPath + " cannot be read: " + tc.reason},
			{planPath, "plan file", Skip, Verified, "the original plan " + planPath + " is not at hand (" + tc.reason + "); the copy in the run folder is used"},
		} {
			what := filepath.Base(c.path) + " as " + tc.kind
			saved := must(os.ReadFile(c.path))
			infiletest.Make(t, c.path, tc.kind, saved, hugeSize)
			r, err := boundedVerify(t, what, rec.Dir, VerifyOptions{})
			if err != nil {
				t.Fatalf("%s: %v", what, err)
			}
			switch {
			case tc.reason == "" && r.Outcome != Verified:
				t.Errorf("%s: outcome %s: %+v", what, r.Outcome, r.Checks)
			case tc.reason == "":
			case r.Outcome != c.class:
				t.Errorf("%s: outcome %s, want %s", what, r.Outcome, c.class)
			case !hasDetail(r, c.check, c.verdict, c.detail):
				t.Errorf("%s: no %s check %s saying %q: %+v", what, c.verdict, c.check, c.detail, r.Checks)
			}
			if err := os.Remove(c.path); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(c.path, saved, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
	if r := verify(t, rec.Dir, VerifyOptions{}); r.Outcome != Verified {
		t.Errorf("the restored inputs: %s", r.Outcome)
	}
}

func hasDetail(r *VerifyReport, name string, verdict Verdict, detail string) bool {
	for _, c := range r.Checks {
		if c.Name == name && c.Verdict == verdict && c.Detail == detail {
			return true
		}
	}
	return false
}

// TestVerifyRechainedDataPath: a forger who re-chains the log can make it name any data
// path. With the record intact otherwise, /dev/zero and a named pipe are refused at once
// as data that cannot be read; with any integrity failure besides (an extra file), the
// paths the log names are not read at all.
func TestVerifyRechainedDataPath(t *testing.T) {
	_, rec := newRun(t, RunOptions{})
	pipe := filepath.Join(t.TempDir(), "pipe")
	infiletest.Make(t, pipe, "pipe", nil, 0)
	for _, tc := range []struct{ path, reason string }{
		{"/dev/zero", "it is a character device, not a regular file"},
		{pipe, "it is a named pipe (FIFO), not a regular file"},
	} {
		dir := copyDir(t, rec.Dir)
		rechainDataPath(t, dir, tc.path)
		r, err := boundedVerify(t, tc.path, dir, VerifyOptions{})
		if err != nil {
			t.Fatal(err)
		}
		want := "the data file " + tc.path + " cannot be read: " + tc.reason
		if r.Outcome != ClassDiffer || !hasDetail(r, "data file", Fail, want) {
			t.Errorf("%s: outcome %s, want %s saying %q: %+v", tc.path, r.Outcome, ClassDiffer, want, r.Checks)
		}
		if err := os.WriteFile(filepath.Join(dir, "extra.txt"), nil, 0o644); err != nil {
			t.Fatal(err)
		}
		r, err = boundedVerify(t, tc.path+" and an extra file", dir, VerifyOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if r.Outcome != ClassIntegrity || hasCheck(r, "data file", Fail) || hasCheck(r, "plan file", Pass) ||
			!hasDetail(r, "inputs", Skip, "the plan and data files the log names are not read: the record itself did not verify") {
			t.Errorf("%s and an extra file: the inputs were read: %s %+v", tc.path, r.Outcome, r.Checks)
		}
	}
}

// rechainDataPath sets the data path of the data.bound record of the run folder dir,
// re-chains the log and its head file and makes the derived files agree (rederive), as a
// forger with write access to dir would.
func rechainDataPath(t *testing.T, dir, path string) {
	t.Helper()
	_, err := audittest.Rechain(filepath.Join(dir, AuditFile), filepath.Join(dir, HeadFile), func(recs []audit.Record) []audit.Record {
		for i, rec := range recs {
			if rec.Event != "data.bound" {
				continue
			}
			var d map[string]any
			if err := json.Unmarshal(rec.Data, &d); err != nil {
				t.Fatal(err)
			}
			d["absolute_path"] = path
			recs[i].Data = must(json.Marshal(d))
		}
		return recs
	})
	if err != nil {
		t.Fatal(err)
	}
	rederive(t, dir)
}

// TestVerifyFlagFiles: a --pubkey or --data file that cannot be used is a usage error
// naming the flag (an InputError: exit 2), given before any check, never a failed check
// of the run; and it never blocks or reads without end.
func TestVerifyFlagFiles(t *testing.T) {
	_, rec, pub := hostileSignedRun(t)
	keys := filepath.Dir(pub)
	priv := strings.TrimSuffix(pub, ".pub")
	kinds := infiletest.Kinds(t, "", must(os.ReadFile(pub)), hugeSize)
	at := func(name string) string { return filepath.Join(kinds, name) }
	garbage := filepath.Join(keys, "data.csv")
	if err := os.WriteFile(garbage, []byte(tiedToy), 0o644); err != nil {
		t.Fatal(err)
	}
	type tc struct{ opt, want string }
	var cases []tc
	for _, c := range followedKinds("65536 bytes (64 KiB)") {
		cases = append(cases, tc{"pubkey=" + at(c.kind), "verify: --pubkey " + at(c.kind) + ": cannot open the key file: " + c.reason})
	}
	for _, c := range followedKinds("4294967296 bytes (4 GiB)") {
		cases = append(cases, tc{"data=" + at(c.kind), "verify: --data " + at(c.kind) + ": cannot open the data file: " + c.reason})
	}
	cases = append(cases,
		tc{"pubkey=" + priv, "verify: --pubkey " + priv + `: it holds a private key (PEM "PRIVATE KEY"), not a public key (PEM "PUBLIC KEY")`},
		tc{"pubkey=" + garbage, "verify: --pubkey " + garbage + ": not a key file: no PEM block"},
		tc{"pubkey=" + at("outside"), ""}, // a link to the right key, wherever it is
		tc{"pubkey=" + at("link"), ""},
	)
	for _, c := range cases {
		var opt VerifyOptions
		if v, ok := strings.CutPrefix(c.opt, "pubkey="); ok {
			opt.PubKey = v
		} else {
			opt.Data = strings.TrimPrefix(c.opt, "data=")
		}
		r, err := boundedVerify(t, c.opt, rec.Dir, opt)
		var ie *InputError
		switch {
		case c.want == "" && (err != nil || r.Outcome != Verified):
			t.Errorf("%s: %v %+v", c.opt, err, r)
		case c.want == "":
		case !errors.As(err, &ie) || err.Error() != c.want:
			t.Errorf("%s: error %v, want an InputError %q", c.opt, err, c.want)
		}
	}
}

// TestRunFlagFiles: run --lock and --sign refuse every hostile kind of file at once with
// the flag named, before anything is written, and follow a link to a good file.
func TestRunFlagFiles(t *testing.T) {
	planPath, _, pub := hostileSignedRun(t)
	priv := strings.TrimSuffix(pub, ".pub")
	lock := filepath.Join(t.TempDir(), "plan.lock.json")
	if _, err := LockPlan(planPath, lock, audit.Actor{User: "u"}, time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)); err != nil {
		t.Fatal(err)
	}
	for _, flag := range []struct {
		name, file, what string
		limit            string
		set              func(*RunOptions, string)
	}{
		{"--lock", lock, "lock", "1048576 bytes (1 MiB)", func(o *RunOptions, p string) { o.LockPath = p }},
		{"--sign", priv, "key", "65536 bytes (64 KiB)", func(o *RunOptions, p string) { o.SignKey, o.Signer = p, "A. Tester" }},
	} {
		kinds := infiletest.Kinds(t, "", must(os.ReadFile(flag.file)), hugeSize)
		for _, tc := range append(followedKinds(flag.limit), struct{ kind, reason string }{"outside", ""}) {
			path := filepath.Join(kinds, tc.kind)
			out := filepath.Join(t.TempDir(), "run")
			opt := RunOptions{Out: out, Now: clock(), Getenv: noEnv}
			flag.set(&opt, path)
			err := infiletest.Bounded(t, flag.name+" "+tc.kind, readLimit, allocLimit, func() error {
				_, err := Run(context.Background(), planPath, opt)
				return err
			})
			want := flag.name + " " + path + ": cannot open the " + flag.what + " file: " + tc.reason
			var ie *InputError
			switch {
			case tc.reason == "" && err != nil:
				t.Errorf("%s %s: %v", flag.name, tc.kind, err)
			case tc.reason == "":
			case !errors.As(err, &ie) || err.Error() != want:
				t.Errorf("%s %s: error %v, want an InputError %q", flag.name, tc.kind, err, want)
			default:
				if m, _ := filepath.Glob(out + "*"); len(m) > 0 {
					t.Errorf("%s %s: a refused run left %v", flag.name, tc.kind, m)
				}
			}
		}
	}
	// --sign needs a private key, a signer, and a signer and meaning of at most
	// audit.MaxSignerBytes.
	long := strings.Repeat("x", audit.MaxSignerBytes+1)
	for _, tc := range []struct {
		key, signer, meaning, want string
	}{
		{pub, "A. Tester", "", "--sign " + pub + `: it holds a public key (PEM "PUBLIC KEY"), not a private key (PEM "PRIVATE KEY")`},
		{priv, "", "", "--sign needs --signer NAME: a signature names who signed"},
		{priv, long, "", "--signer: 1025 bytes, more than the limit of 1024 for a signer"},
		{priv, "A. Tester", long, "--meaning: 1025 bytes, more than the limit of 1024 for a meaning"},
	} {
		opt := RunOptions{Out: filepath.Join(t.TempDir(), "run"), Now: clock(), Getenv: noEnv, SignKey: tc.key, Signer: tc.signer, Meaning: tc.meaning}
		_, err := Run(context.Background(), planPath, opt)
		var ie *InputError
		if !errors.As(err, &ie) || err.Error() != tc.want {
			t.Errorf("error %v, want an InputError %q", err, tc.want)
		}
	}
}
