package audit

import (
	"crypto/ed25519"
	"crypto/x509"
	"encoding/base64"
	"encoding/hex"
	"encoding/pem"
	"errors"
	"os"
	"path/filepath"
	"testing"
	"time"
)

func newKeys(t testing.TB) (ed25519.PrivateKey, ed25519.PublicKey, string) {
	t.Helper()
	dir := t.TempDir()
	priv, pub := filepath.Join(dir, "k.pem"), filepath.Join(dir, "k.pub")
	fp, err := GenerateKey(priv, pub)
	if err != nil {
		t.Fatal(err)
	}
	sk, err := loadPrivateKey(priv)
	if err != nil {
		t.Fatal(err)
	}
	pk, err := loadPublicKey(pub)
	if err != nil {
		t.Fatal(err)
	}
	if fp != Fingerprint(pk) {
		t.Fatalf("GenerateKey fingerprint %s, loaded key %s", fp, Fingerprint(pk))
	}
	return sk, pk, dir
}

var signTime = time.Date(2026, 12, 1, 20, 12, 32, 123456789, time.UTC)

func TestSignVerifyRoundTrip(t *testing.T) {
	sk, pk, _ := newKeys(t)
	head := Digest([]byte("head"))
	s, err := Sign(sk, head, 7, "A. Tester", "approval", signTime)
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Verify(pk); err != nil {
		t.Fatalf("Verify: %v", err)
	}
	if s.Format != SignatureFormat || s.Algorithm != "ed25519" || s.Head != head || s.Seq != 7 ||
		s.SignedAt != "2026-12-01T20:12:32.123456789Z" || s.KeyFingerprint != Fingerprint(pk) {
		t.Errorf("signature fields %+v", s)
	}
}

// TestVerifyDetectsChanges changes each field in turn; every change must fail.
func TestVerifyDetectsChanges(t *testing.T) {
	sk, pk, _ := newKeys(t)
	s, err := Sign(sk, Digest([]byte("head")), 7, "A. Tester", "approval", signTime)
	if err != nil {
		t.Fatal(err)
	}
	other, _, _ := newKeys(t)
	otherSig, err := Sign(other, s.Head, s.Seq, s.Signer, s.Meaning, signTime)
	if err != nil {
		t.Fatal(err)
	}
	flipValue := func(v string) string {
		b, _ := base64.StdEncoding.DecodeString(v)
		b[10] ^= 1
		return base64.StdEncoding.EncodeToString(b)
	}
	tests := []struct {
		name   string
		change func(*Signature)
	}{
		{"head", func(s *Signature) { s.Head = Digest([]byte("other head")) }},
		{"seq", func(s *Signature) { s.Seq = 8 }},
		{"signer", func(s *Signature) { s.Signer = "B. Tester" }},
		{"meaning", func(s *Signature) { s.Meaning = "review" }},
		{"time", func(s *Signature) { s.SignedAt = "2026-12-01T20:12:32.123456788Z" }},
		{"fingerprint", func(s *Signature) { s.KeyFingerprint = Digest([]byte("k")) }},
		{"signature bit", func(s *Signature) { s.Value = flipValue(s.Value) }},
		{"signature from other key", func(s *Signature) { s.Value = otherSig.Value }},
		{"signature truncated", func(s *Signature) { s.Value = s.Value[:40] }},
		{"signature not base64", func(s *Signature) { s.Value = "!" + s.Value[1:] }},
		{"format", func(s *Signature) { s.Format = "rankplan-signature/2" }},
		{"algorithm", func(s *Signature) { s.Algorithm = "ed448" }},
	}
	for _, tc := range tests {
		c := s
		tc.change(&c)
		if err := c.Verify(pk); err == nil {
			t.Errorf("%s changed: Verify passed", tc.name)
		}
	}
	// The right signature under a wrong key, and a wrong-length key.
	if err := s.Verify(other.Public().(ed25519.PublicKey)); err == nil {
		t.Error("wrong key: Verify passed")
	}
	if err := s.Verify(pk[:31]); err == nil {
		t.Error("short key: Verify passed")
	}
	// A forger who also rewrites the fingerprint to name his key still
	// fails against the pinned key.
	forged := otherSig
	if err := forged.Verify(pk); err == nil {
		t.Error("other key's signature verified under the pinned key")
	}
}

func TestSignRejects(t *testing.T) {
	sk, _, _ := newKeys(t)
	h := Digest(nil)
	bad := []struct {
		name    string
		key     ed25519.PrivateKey
		head    string
		seq     int64
		signer  string
		meaning string
	}{
		{"short key", sk[:10], h, 1, "s", "approval"},
		{"bad head", sk, "sha256:xyz", 1, "s", "approval"},
		{"seq 0", sk, h, 0, "s", "approval"},
		{"no signer", sk, h, 1, "", "approval"},
		{"no meaning", sk, h, 1, "s", ""},
	}
	for _, b := range bad {
		if _, err := Sign(b.key, b.head, b.seq, b.signer, b.meaning, signTime); err == nil {
			t.Errorf("%s: no error", b.name)
		}
	}
}

func TestGenerateKeyFiles(t *testing.T) {
	_, _, dir := newKeys(t)
	fi, err := os.Stat(filepath.Join(dir, "k.pem"))
	if err != nil {
		t.Fatal(err)
	}
	if fi.Mode().Perm() != 0o600 {
		t.Errorf("private key mode %v, want 0600", fi.Mode().Perm())
	}
	priv, _ := os.ReadFile(filepath.Join(dir, "k.pem"))
	pub, _ := os.ReadFile(filepath.Join(dir, "k.pub"))
	// GenerateKey refuses existing files, either one, and changes neither.
	cases := [][2]string{
		{filepath.Join(dir, "k.pem"), filepath.Join(dir, "new.pub")},
		{filepath.Join(dir, "new.pem"), filepath.Join(dir, "k.pub")},
		{filepath.Join(dir, "same"), filepath.Join(dir, "same")},
	}
	for _, c := range cases {
		if _, err := GenerateKey(c[0], c[1]); err == nil {
			t.Errorf("GenerateKey(%s, %s): no error", c[0], c[1])
		}
	}
	for _, n := range []string{"new.pub", "new.pem", "same"} {
		if _, err := os.Stat(filepath.Join(dir, n)); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("refused GenerateKey left %s behind", n)
		}
	}
	priv2, _ := os.ReadFile(filepath.Join(dir, "k.pem"))
	pub2, _ := os.ReadFile(filepath.Join(dir, "k.pub"))
	if string(priv) != string(priv2) || string(pub) != string(pub2) {
		t.Error("refused GenerateKey changed an existing key file")
	}
	// Loading the wrong kind of file fails.
	if _, err := loadPrivateKey(filepath.Join(dir, "k.pub")); err == nil {
		t.Error("loadPrivateKey of a public key: no error")
	}
	if _, err := loadPublicKey(filepath.Join(dir, "k.pem")); err == nil {
		t.Error("loadPublicKey of a private key: no error")
	}
	junk := filepath.Join(dir, "junk")
	os.WriteFile(junk, []byte("not pem"), 0o600)
	if _, err := loadPrivateKey(junk); err == nil {
		t.Error("loadPrivateKey of junk: no error")
	}
}

// TestEd25519RFC8032Vector runs RFC 8032 §7.1 TEST 1 (Josefsson and
// Liusvaara 2017; the same line is the first of Go 1.26.8's
// src/crypto/ed25519/testdata/sign.input.gz) through a PKCS #8 PEM file,
// ParsePrivateKey, Fingerprint and the Sign/Verify path.
func TestEd25519RFC8032Vector(t *testing.T) {
	const (
		secret = "9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60"
		public = "d75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a"
		sigHex = "e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e065224901555fb8821590a33bacc61e39701cf9b46bd25bf5f0595bbe24655141438e7a100b"
	)
	seed, _ := hex.DecodeString(secret)
	der, err := x509.MarshalPKCS8PrivateKey(ed25519.NewKeyFromSeed(seed))
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "rfc8032.pem")
	if err := os.WriteFile(p, pem.EncodeToMemory(&pem.Block{Type: "PRIVATE KEY", Bytes: der}), 0o600); err != nil {
		t.Fatal(err)
	}
	sk, err := loadPrivateKey(p)
	if err != nil {
		t.Fatal(err)
	}
	pk := sk.Public().(ed25519.PublicKey)
	if hex.EncodeToString(pk) != public {
		t.Fatalf("public key %x, want %s", []byte(pk), public)
	}
	if got := hex.EncodeToString(ed25519.Sign(sk, nil)); got != sigHex {
		t.Fatalf("signature of the empty message %s, want %s", got, sigHex)
	}
	s, err := Sign(sk, Digest(nil), 1, "RFC 8032 test 1", "review", signTime)
	if err != nil {
		t.Fatal(err)
	}
	msg, _ := signedMessage(s)
	raw, _ := base64.StdEncoding.DecodeString(s.Value)
	if !ed25519.Verify(pk, msg, raw) || s.Verify(pk) != nil {
		t.Error("Sign output does not verify as plain Ed25519 over the domain-separated message")
	}
	if s.KeyFingerprint != Fingerprint(pk) {
		t.Error("fingerprint")
	}
}

// loadPrivateKey and loadPublicKey read a key file the tests wrote and parse it; the
// command reads key files through runner's flag-file readers (size limits, no pipes).
func loadPrivateKey(path string) (ed25519.PrivateKey, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return ParsePrivateKey(b)
}

func loadPublicKey(path string) (ed25519.PublicKey, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return ParsePublicKey(b)
}
