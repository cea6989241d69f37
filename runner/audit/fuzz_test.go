package audit

import (
	"bytes"
	"crypto/ed25519"
	"crypto/x509"
	"encoding/hex"
	"encoding/json"
	"encoding/pem"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// FuzzReadChain feeds arbitrary bytes to the chain checker, with the real line limit and
// with one of 160 bytes (so that short inputs reach it: the seed's records are longer). It must never panic,
// every problem must name a line of the input, every line over the limit must be a
// problem of its own, and an input with no problems must re-serialise byte for byte from
// its records.
func FuzzReadChain(f *testing.F) {
	dir := f.TempDir()
	p := filepath.Join(dir, "seed.jsonl")
	l, err := Create(p, Actor{User: "u", Host: "h", CI: map[string]string{"CI": "true"}},
		func() time.Time { return time.Date(2026, 1, 2, 3, 4, 5, 6, time.UTC) })
	if err != nil {
		f.Fatal(err)
	}
	for _, ev := range []string{"run.started", "plan.bound", "run.finished"} {
		if _, err := l.Append(ev, map[string]any{"x": 1.5, "s": "é\u2028"}); err != nil {
			f.Fatal(err)
		}
	}
	l.Close()
	good, err := os.ReadFile(p)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	f.Add(good[:len(good)-1])
	f.Add([]byte{})
	f.Add([]byte("\n\n"))
	f.Add([]byte(`{"schema":1}` + "\n"))
	f.Fuzz(func(t *testing.T, content []byte) {
		for _, maxLine := range []int{MaxRecordBytes, 160} {
			checkChainProperties(t, content, maxLine)
		}
	})
}

func checkChainProperties(t *testing.T, content []byte, maxLine int) {
	ch, problems, warnings := checkChain("f", content, maxLine)
	lines := bytes.Count(content, []byte("\n")) + 1
	for _, pr := range append(problems, warnings...) {
		if pr.Line < 1 || pr.Line > lines {
			t.Fatalf("problem on line %d of %d: %v", pr.Line, lines, pr)
		}
	}
	for i, line := range bytes.Split(content, []byte("\n")) {
		if len(line) <= maxLine {
			continue
		}
		found := false
		for _, pr := range problems {
			found = found || pr.Line == i+1 && strings.Contains(pr.Msg, "more than the limit")
		}
		if !found {
			t.Fatalf("line %d has %d bytes, over the limit of %d, and no problem says so: %v", i+1, len(line), maxLine, problems)
		}
	}
	if len(problems) == 0 {
		var buf bytes.Buffer
		for _, r := range ch.Records {
			b, err := Canonical(r)
			if err != nil {
				t.Fatal(err)
			}
			buf.Write(b)
			buf.WriteByte('\n')
		}
		if !bytes.Equal(buf.Bytes(), content) {
			t.Fatalf("clean chain does not re-serialise to its input")
		}
	}
}

// fuzzKey is a fixed Ed25519 key for the fuzz targets: the private key of RFC 8032 §7.1
// TEST 1 (its seed, as in TestEd25519RFC8032Vector).
func fuzzKey(f *testing.F) ed25519.PrivateKey {
	f.Helper()
	seed, err := hex.DecodeString("9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60")
	if err != nil {
		f.Fatal(err)
	}
	return ed25519.NewKeyFromSeed(seed)
}

// FuzzParseSignature feeds arbitrary bytes to the signature reader. It must never panic;
// a signature it accepts has well-formed fields and reads back the same after being
// written again; and one that verifies against the key of the seed is the seed itself,
// field for field: no edit of a signature file, however it is spelled, verifies.
func FuzzParseSignature(f *testing.F) {
	key := fuzzKey(f)
	pub := key.Public().(ed25519.PublicKey)
	seed, err := Sign(key, Digest([]byte("head")), 12, "A. Tester", "approval", signTime)
	if err != nil {
		f.Fatal(err)
	}
	b, err := json.MarshalIndent(seed, "", "  ")
	if err != nil {
		f.Fatal(err)
	}
	f.Add(b)
	f.Add(append(b, '\n'))
	f.Add(bytes.Replace(b, []byte(`"seq": 12`), []byte(`"seq": 13`), 1))
	f.Add(bytes.Replace(b, []byte(`"format"`), []byte(`"extra": 1, "format"`), 1))
	f.Add(append(append([]byte(nil), b...), b...))
	f.Add([]byte(`{}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		s, err := ParseSignature(b)
		if err != nil {
			return
		}
		if err := s.checkFields(); err != nil {
			t.Fatalf("accepted with bad fields: %v", err)
		}
		again, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		if s2, err := ParseSignature(again); err != nil || s2 != s {
			t.Fatalf("does not read back: %v\n%+v\n%+v", err, s, s2)
		}
		if s.Verify(pub) == nil && s != seed {
			t.Fatalf("an edited signature verifies:\n%+v\nseed:\n%+v", s, seed)
		}
	})
}

// FuzzParseLock feeds arbitrary bytes to the lock reader. It must never panic; a lock it
// accepts holds its plan in canonical form, with the recorded digest, and reads back the
// same after being written again.
func FuzzParseLock(f *testing.F) {
	l := testLock(f)
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	if err := enc.Encode(l); err != nil {
		f.Fatal(err)
	}
	b := buf.Bytes()
	f.Add(b)
	f.Add(bytes.Replace(b, []byte(`0.05`), []byte(`5e-2`), 1))
	f.Add(bytes.Replace(b, []byte(`0.05`), []byte(`0.1`), 1))
	f.Add(bytes.Replace(b, []byte(`"format"`), []byte(`"extra": 1, "format"`), 1))
	f.Add(append(append([]byte(nil), b...), '{'))
	f.Add([]byte(`{"format": "rankplan-lock/1", "plan": null}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		l, err := ParseLock(b)
		if err != nil {
			return
		}
		c, err := Canonical(l.Plan)
		if err != nil || !bytes.Equal(c, l.Plan) {
			t.Fatalf("accepted plan is not canonical: %v\n%s", err, l.Plan)
		}
		if Digest(c) != l.PlanSHA256 {
			t.Fatalf("accepted plan hashes to %s, lock says %s", Digest(c), l.PlanSHA256)
		}
		again, err := json.Marshal(l)
		if err != nil {
			t.Fatal(err)
		}
		if l2, err := ParseLock(again); err != nil || !reflect.DeepEqual(l, l2) {
			t.Fatalf("does not read back: %v\n%+v\n%+v", err, l, l2)
		}
	})
}

// FuzzParseKey feeds arbitrary bytes to both key readers. They must never panic; no
// input is both a public and a private key; an accepted public key has 32 bytes and reads
// back the same from its own PEM; an accepted private key has 64 bytes and its
// signatures verify against its public half.
func FuzzParseKey(f *testing.F) {
	key := fuzzKey(f)
	privDER, err := x509.MarshalPKCS8PrivateKey(key)
	if err != nil {
		f.Fatal(err)
	}
	pubDER, err := x509.MarshalPKIXPublicKey(key.Public())
	if err != nil {
		f.Fatal(err)
	}
	privPEM := pem.EncodeToMemory(&pem.Block{Type: "PRIVATE KEY", Bytes: privDER})
	pubPEM := pem.EncodeToMemory(&pem.Block{Type: "PUBLIC KEY", Bytes: pubDER})
	f.Add(privPEM)
	f.Add(pubPEM)
	f.Add(append(append([]byte(nil), pubPEM...), pubPEM...))
	f.Add(pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: pubDER}))
	f.Add([]byte("not a key"))
	f.Fuzz(func(t *testing.T, b []byte) {
		pub, perr := ParsePublicKey(b)
		priv, kerr := ParsePrivateKey(b)
		if perr == nil && kerr == nil {
			t.Fatal("read as a public and as a private key")
		}
		if perr == nil {
			if len(pub) != ed25519.PublicKeySize {
				t.Fatalf("public key of %d bytes", len(pub))
			}
			der, err := x509.MarshalPKIXPublicKey(pub)
			if err != nil {
				t.Fatal(err)
			}
			back, err := ParsePublicKey(pem.EncodeToMemory(&pem.Block{Type: "PUBLIC KEY", Bytes: der}))
			if err != nil || !pub.Equal(back) {
				t.Fatalf("public key does not read back: %v", err)
			}
		}
		if kerr == nil {
			if len(priv) != ed25519.PrivateKeySize {
				t.Fatalf("private key of %d bytes", len(priv))
			}
			msg := []byte("rankplan")
			if !ed25519.Verify(priv.Public().(ed25519.PublicKey), msg, ed25519.Sign(priv, msg)) {
				t.Fatal("a signature of the accepted private key does not verify against its public half")
			}
		}
	})
}
