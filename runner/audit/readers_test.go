package audit

import (
	"bytes"
	"crypto/x509"
	"encoding/json"
	"encoding/pem"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"rankplan/internal/infile"
	"rankplan/internal/infile/infiletest"
)

// TestReadChainKinds: the log is read only when it is itself a regular file within
// MaxLogBytes; a link (to a good log, to a device, to itself), a pipe, a folder and a
// huge file are refused at once, with an *infile.Error naming what the file is.
func TestReadChainKinds(t *testing.T) {
	good := writeGoodLog(t)
	content, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	dir := infiletest.Kinds(t, "", content, MaxLogBytes+1)
	for _, tc := range []struct{ name, want string }{
		{"ok", ""},
		{"link", "it is a symbolic link (to ok), not a regular file"},
		{"zero", "it is a symbolic link (to /dev/zero), not a regular file"},
		{"urandom", "it is a symbolic link (to /dev/urandom), not a regular file"},
		{"loop", "it is a symbolic link (to loop), not a regular file"},
		{"pipe", "it is a named pipe (FIFO), not a regular file"},
		{"dir", "it is a directory, not a regular file"},
		{"big", "it has 67108865 bytes, more than the limit of 67108864 bytes (64 MiB)"},
		{"none", "no such file or directory"},
	} {
		path := filepath.Join(dir, tc.name)
		err := infiletest.Bounded(t, tc.name, 2*time.Second, 32<<20, func() error {
			ch, problems, _, err := ReadChain(path)
			if err == nil && (len(problems) > 0 || len(ch.Records) != 3) {
				t.Errorf("%s: %d records, problems %v", tc.name, len(ch.Records), problems)
			}
			return err
		})
		var e *infile.Error
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%s: %v", tc.name, err)
		case tc.want == "":
		case err == nil || !errors.As(err, &e) || e.Reason != tc.want:
			t.Errorf("%s: error %v, want the reason %q", tc.name, err, tc.want)
		case err.Error() != "read audit log "+path+": "+tc.want:
			t.Errorf("%s: error %q", tc.name, err)
		}
	}
}

// writeGoodLog writes a three-record log and returns its path.
func writeGoodLog(t *testing.T) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "audit.jsonl")
	l, err := Create(p, testActor, func() time.Time { return signTime })
	if err != nil {
		t.Fatal(err)
	}
	for _, ev := range []string{"run.started", "plan.bound", "run.finished"} {
		if _, err := l.Append(ev, map[string]any{"n": 1}); err != nil {
			t.Fatal(err)
		}
	}
	if err := l.Close(); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestRecordLimit: a line longer than MaxRecordBytes is a problem of its own line, found
// without parsing it, and the lines around it are still read; Append refuses to write
// such a record, and a record that would take the log past MaxLogBytes.
func TestRecordLimit(t *testing.T) {
	content, err := os.ReadFile(writeGoodLog(t))
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(content, []byte("\n"))
	long := append(bytes.Repeat([]byte("x"), MaxRecordBytes+1), '\n')
	log := append(append(append([]byte(nil), lines[0]...), long...), lines[1]...)
	_, problems, _ := checkChain("f", log, MaxRecordBytes)
	// Line 3 follows a line that is not a record, so only the form of its prev is checked.
	want := "f:2: line of 16777217 bytes, more than the limit of 16777216 bytes (16 MiB) for one record"
	if len(problems) != 1 || problems[0].Error() != want {
		t.Errorf("problems %v, want %q", problems, want)
	}

	l, err := Create(filepath.Join(t.TempDir(), "a.jsonl"), testActor, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	_, err = l.Append("run.started", map[string]string{"x": strings.Repeat("x", MaxRecordBytes)})
	if err == nil || !strings.Contains(err.Error(), "more than the limit of 16777216 bytes (16 MiB) for one record") {
		t.Errorf("Append of a record over the limit: %v", err)
	}
	if _, err := l.Append("run.started", map[string]int{"n": 1}); err != nil {
		t.Fatal(err)
	}
	l.size = MaxLogBytes - 100 // as if the log held that much
	_, err = l.Append("run.finished", map[string]string{"x": strings.Repeat("x", 100)})
	if err == nil || err.Error() != "append audit record run.finished: the log would pass its limit of 67108864 bytes (64 MiB)" {
		t.Errorf("Append past the log's limit: %v", err)
	}
	if l.Seq() != 1 {
		t.Errorf("refused appends advanced seq to %d", l.Seq())
	}
}

// TestParseKeyErrors: each reader says what the bytes hold instead of its kind of key.
func TestParseKeyErrors(t *testing.T) {
	_, pk, dir := newKeys(t)
	priv, err := os.ReadFile(filepath.Join(dir, "k.pem"))
	if err != nil {
		t.Fatal(err)
	}
	pub, err := os.ReadFile(filepath.Join(dir, "k.pub"))
	if err != nil {
		t.Fatal(err)
	}
	der, _ := x509.MarshalPKIXPublicKey(pk)
	for _, tc := range []struct {
		name            string
		b               []byte
		wantPub, wantPr string
	}{
		{"public", pub, "", `it holds a public key (PEM "PUBLIC KEY"), not a private key (PEM "PRIVATE KEY")`},
		{"private", priv, `it holds a private key (PEM "PRIVATE KEY"), not a public key (PEM "PUBLIC KEY")`, ""},
		{"garbage", []byte("g,y\nA,1\n"), "not a key file: no PEM block", "not a key file: no PEM block"},
		{"empty", nil, "not a key file: no PEM block", "not a key file: no PEM block"},
		{"certificate", pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}),
			`its PEM block is "CERTIFICATE", want "PUBLIC KEY"`, `its PEM block is "CERTIFICATE", want "PRIVATE KEY"`},
		{"two blocks", append(append([]byte(nil), pub...), pub...), "data after the PEM block",
			`it holds a public key (PEM "PUBLIC KEY"), not a private key (PEM "PRIVATE KEY")`},
		{"bad body", pem.EncodeToMemory(&pem.Block{Type: "PUBLIC KEY", Bytes: []byte("x")}),
			"not a PKIX public key: ", `it holds a public key (PEM "PUBLIC KEY"), not a private key (PEM "PRIVATE KEY")`},
	} {
		_, perr := ParsePublicKey(tc.b)
		_, kerr := ParsePrivateKey(tc.b)
		for _, c := range []struct {
			what string
			err  error
			want string
		}{{"public", perr, tc.wantPub}, {"private", kerr, tc.wantPr}} {
			if c.want == "" && c.err != nil || c.want != "" && (c.err == nil || !strings.HasPrefix(c.err.Error(), c.want)) {
				t.Errorf("%s as a %s key: error %v, want %q", tc.name, c.what, c.err, c.want)
			}
		}
	}
}

// TestParseSignatureStrict: a signature file holds one object with the known fields
// only, nothing after it, and well-formed fields; Sign refuses a signer or meaning that
// would make it large.
func TestParseSignatureStrict(t *testing.T) {
	sk, pk, _ := newKeys(t)
	s, err := Sign(sk, Digest([]byte("head")), 7, "A. Tester", "approval", signTime)
	if err != nil {
		t.Fatal(err)
	}
	good, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	if got, err := ParseSignature(append(good, '\n')); err != nil || got != s || got.Verify(pk) != nil {
		t.Fatalf("ParseSignature of a good file: %+v, %v", got, err)
	}
	for _, tc := range []struct{ name, old, new, want string }{
		{"extra field", `"format"`, `"extra": 1, "format"`, `not a signature file: json: unknown field "extra"`},
		{"two objects", "}", "}{}", "not a signature file: data after the JSON object"},
		{"not json", `{`, `[`, "not a signature file: invalid character ':' after array element"},
		{"seq", `"seq": 7`, `"seq": 0`, "seq 0, want at least 1"},
		{"head", s.Head, "sha256:00", `head "sha256:00" is not a sha256 digest`},
		{"format", SignatureFormat, "rankplan-signature/9", `signature format "rankplan-signature/9", want "rankplan-signature/1"`},
	} {
		b := strings.Replace(string(good), tc.old, tc.new, 1)
		if b == string(good) {
			t.Fatalf("%s: edit did not apply", tc.name)
		}
		if _, err := ParseSignature([]byte(b)); err == nil || err.Error() != tc.want {
			t.Errorf("%s: error %v, want %q", tc.name, err, tc.want)
		}
	}
	long := strings.Repeat("é", MaxSignerBytes/2+1)
	if _, err := Sign(sk, s.Head, 7, long, "approval", signTime); err == nil || err.Error() != "sign: signer has 1026 bytes, more than the limit of 1024" {
		t.Errorf("Sign with a long signer: %v", err)
	}
	if _, err := Sign(sk, s.Head, 7, "A. Tester", long, signTime); err == nil || err.Error() != "sign: meaning has 1026 bytes, more than the limit of 1024" {
		t.Errorf("Sign with a long meaning: %v", err)
	}
}

// TestParseLockTrailing: bytes after the lock's JSON object are refused.
func TestParseLockTrailing(t *testing.T) {
	p := filepath.Join(t.TempDir(), "plan.lock")
	if err := writeLock(p, testLock(t)); err != nil {
		t.Fatal(err)
	}
	good, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ParseLock(append(good, "{}"...)); err == nil || err.Error() != "not a lock file: data after the JSON object" {
		t.Errorf("a lock with data after it: %v", err)
	}
}
