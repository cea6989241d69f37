package audit

import (
	"bytes"
	"crypto/ed25519"
	"crypto/rand"
	"crypto/x509"
	"encoding/base64"
	"encoding/json"
	"encoding/pem"
	"errors"
	"fmt"
	"io"
	"os"
	"time"
)

// SignatureFormat names the format of a Signature.
const SignatureFormat = "rankplan-signature/1"

// signatureDomain is the domain label prefixed to every signed message, so
// a signature over an audit head cannot be replayed as one over another
// kind of document.
const signatureDomain = "rankplan/signature/v1"

// Signature is a detached Ed25519 signature over an audit head. Signer,
// meaning and time are inside the signed bytes, as 21 CFR Part 11 §11.50
// requires of a signature's manifestation, and the head binds it to the
// record (§11.70).
type Signature struct {
	Format         string `json:"format"`          // SignatureFormat
	Algorithm      string `json:"algorithm"`       // "ed25519"
	KeyFingerprint string `json:"key_fingerprint"` // Fingerprint of the public key
	Signer         string `json:"signer"`
	Meaning        string `json:"meaning"`   // e.g. "approval", "review", "authorship" (Part 11 §11.50)
	SignedAt       string `json:"signed_at"` // FormatTime
	Head           string `json:"head"`      // the audit head that is signed
	Seq            int64  `json:"seq"`       // the seq of the head record
	Value          string `json:"signature"` // base64 (std) of the Ed25519 signature
}

// GenerateKey writes a new Ed25519 key pair (RFC 8032 §5.1.5): the private
// key as PEM "PRIVATE KEY" (PKCS #8, RFC 5208/8410) with file mode 0600 and
// the public key as PEM "PUBLIC KEY" (PKIX, RFC 5280/8410) with mode 0644.
// It refuses to overwrite either file and returns Fingerprint of the public
// key.
func GenerateKey(privPath, pubPath string) (fingerprint string, err error) {
	if privPath == pubPath {
		return "", errors.New("generate key: private and public key paths are the same")
	}
	pub, priv, err := ed25519.GenerateKey(rand.Reader)
	if err != nil {
		return "", fmt.Errorf("generate key: %w", err)
	}
	privDER, err := x509.MarshalPKCS8PrivateKey(priv)
	if err != nil {
		return "", fmt.Errorf("generate key: %w", err)
	}
	pubDER, err := x509.MarshalPKIXPublicKey(pub)
	if err != nil {
		return "", fmt.Errorf("generate key: %w", err)
	}
	// Claim both names before writing anything, so a refusal leaves no file.
	privF, err := os.OpenFile(privPath, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return "", fmt.Errorf("generate key: %w", err)
	}
	pubF, err := os.OpenFile(pubPath, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		privF.Close()
		os.Remove(privPath)
		return "", fmt.Errorf("generate key: %w", err)
	}
	fail := func(err error) (string, error) {
		privF.Close()
		pubF.Close()
		os.Remove(privPath)
		os.Remove(pubPath)
		return "", fmt.Errorf("generate key: %w", err)
	}
	if err := privF.Chmod(0o600); err != nil {
		return fail(err)
	}
	if err := pem.Encode(privF, &pem.Block{Type: "PRIVATE KEY", Bytes: privDER}); err != nil {
		return fail(err)
	}
	if err := pem.Encode(pubF, &pem.Block{Type: "PUBLIC KEY", Bytes: pubDER}); err != nil {
		return fail(err)
	}
	for _, f := range []*os.File{privF, pubF} {
		if err := f.Sync(); err != nil {
			return fail(err)
		}
	}
	if err := privF.Close(); err != nil {
		return fail(err)
	}
	if err := pubF.Close(); err != nil {
		os.Remove(privPath)
		os.Remove(pubPath)
		return "", fmt.Errorf("generate key: %w", err)
	}
	return Fingerprint(pub), nil
}

// Limits of the files this package reads, so that a wrong or hostile file is refused
// before it fills memory. Each is far above what the writer of the file writes.
const (
	// MaxKeyBytes is the largest key file read: 64 KiB; an Ed25519 key in PEM takes
	// about 120 bytes.
	MaxKeyBytes = 64 << 10
	// MaxSignatureBytes is the largest signature file read: 64 KiB. Sign refuses a
	// signer or meaning over MaxSignerBytes, so that every signature it makes is
	// several times smaller.
	MaxSignatureBytes = 64 << 10
	// MaxSignerBytes is the longest signer name and meaning a signature holds.
	MaxSignerBytes = 1 << 10
)

// parsePEM returns the bytes of the single PEM block of the wanted type in b. The error
// says what b holds instead, without a file name (callers put that in front).
func parsePEM(b []byte, typ string) ([]byte, error) {
	block, rest := pem.Decode(b)
	if block == nil {
		return nil, errors.New("not a key file: no PEM block")
	}
	if block.Type != typ {
		names := map[string]string{"PRIVATE KEY": "a private key", "PUBLIC KEY": "a public key"}
		if names[block.Type] != "" && names[typ] != "" {
			return nil, fmt.Errorf("it holds %s (PEM %q), not %s (PEM %q)", names[block.Type], block.Type, names[typ], typ)
		}
		return nil, fmt.Errorf("its PEM block is %q, want %q", block.Type, typ)
	}
	if len(bytes.TrimSpace(rest)) != 0 {
		return nil, errors.New("data after the PEM block")
	}
	return block.Bytes, nil
}

// ParsePrivateKey reads an Ed25519 private key in the form GenerateKey writes it: one
// PEM block "PRIVATE KEY" holding PKCS #8 (RFC 5208, RFC 8410), nothing else but white
// space. The error says what is wrong, without a file name.
func ParsePrivateKey(b []byte) (ed25519.PrivateKey, error) {
	return parseKey[ed25519.PrivateKey](b, "PRIVATE KEY", "PKCS #8 private key", x509.ParsePKCS8PrivateKey)
}

// ParsePublicKey reads an Ed25519 public key in the form GenerateKey writes it: one PEM
// block "PUBLIC KEY" holding PKIX (RFC 5280, RFC 8410), nothing else but white space.
// The error says what is wrong, without a file name.
func ParsePublicKey(b []byte) (ed25519.PublicKey, error) {
	return parseKey[ed25519.PublicKey](b, "PUBLIC KEY", "PKIX public key", x509.ParsePKIXPublicKey)
}

// parseKey reads the PEM block typ of b with parse and requires a key of type K.
func parseKey[K any](b []byte, typ, form string, parse func([]byte) (any, error)) (K, error) {
	var zero K
	der, err := parsePEM(b, typ)
	if err != nil {
		return zero, err
	}
	k, err := parse(der)
	if err != nil {
		return zero, fmt.Errorf("not a %s: %w", form, err)
	}
	key, ok := k.(K)
	if !ok {
		return zero, fmt.Errorf("not an Ed25519 key (%T)", k)
	}
	return key, nil
}

// ParseSignature reads a signature file as the tool writes it: one JSON object with the
// fields of Signature and no others, nothing after it, and well-formed fields (format,
// algorithm, digests, seq, signer, meaning and time; see Verify). It does not check the
// signature value, which needs the pinned key.
func ParseSignature(b []byte) (Signature, error) {
	var s Signature
	if err := decodeOne(b, &s, "signature"); err != nil {
		return Signature{}, err
	}
	if err := s.checkFields(); err != nil {
		return Signature{}, err
	}
	return s, nil
}

// decodeOne decodes b, which must hold one JSON object with the fields of v and no
// others, and nothing after it but white space, into v; what names the kind of file in
// the error.
func decodeOne(b []byte, v any, what string) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return fmt.Errorf("not a %s file: %w", what, err)
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return fmt.Errorf("not a %s file: data after the JSON object", what)
	}
	return nil
}

// Fingerprint returns the digest of the raw 32-byte public key.
//
//	Fingerprint(pub) = Digest(pub)    ("sha256:" + hex SHA-256 of the RFC 8032 encoding)
func Fingerprint(pub ed25519.PublicKey) string { return Digest(pub) }

// signedMessage returns the bytes an Ed25519 signature covers:
//
//	"rankplan/signature/v1" || 0x00 || Canonical(s with Value = "")
//
// Value is emptied, not removed, so the canonical form is unambiguous.
func signedMessage(s Signature) ([]byte, error) {
	s.Value = ""
	body, err := Canonical(s)
	if err != nil {
		return nil, err
	}
	msg := make([]byte, 0, len(signatureDomain)+1+len(body))
	msg = append(msg, signatureDomain...)
	msg = append(msg, 0)
	return append(msg, body...), nil
}

// Sign signs an audit head (RFC 8032 §5.1.6) with key:
//
//	Value = base64(Ed25519-Sign(key, signedMessage(s)))
//
// where signedMessage is the domain label "rankplan/signature/v1", a zero
// byte and the canonical Signature without its value. head must be a
// digest, seq ≥ 1, and signer and meaning non-empty.
func Sign(key ed25519.PrivateKey, head string, seq int64, signer, meaning string, at time.Time) (Signature, error) {
	if len(key) != ed25519.PrivateKeySize {
		return Signature{}, fmt.Errorf("sign: private key has %d bytes, want %d", len(key), ed25519.PrivateKeySize)
	}
	s := Signature{
		Format:         SignatureFormat,
		Algorithm:      "ed25519",
		KeyFingerprint: Fingerprint(key.Public().(ed25519.PublicKey)),
		Signer:         signer,
		Meaning:        meaning,
		SignedAt:       FormatTime(at),
		Head:           head,
		Seq:            seq,
	}
	if err := s.checkFields(); err != nil {
		return Signature{}, fmt.Errorf("sign: %w", err)
	}
	msg, err := signedMessage(s)
	if err != nil {
		return Signature{}, fmt.Errorf("sign: %w", err)
	}
	s.Value = base64.StdEncoding.EncodeToString(ed25519.Sign(key, msg))
	return s, nil
}

// checkFields checks everything but the signature value.
func (s Signature) checkFields() error {
	switch {
	case s.Format != SignatureFormat:
		return fmt.Errorf("signature format %q, want %q", s.Format, SignatureFormat)
	case s.Algorithm != "ed25519":
		return fmt.Errorf("signature algorithm %q, want \"ed25519\"", s.Algorithm)
	case !isDigest(s.Head):
		return fmt.Errorf("head %q is not a sha256 digest", s.Head)
	case !isDigest(s.KeyFingerprint):
		return fmt.Errorf("key fingerprint %q is not a sha256 digest", s.KeyFingerprint)
	case s.Seq < 1:
		return fmt.Errorf("seq %d, want at least 1", s.Seq)
	case s.Signer == "":
		return errors.New("signer is empty")
	case s.Meaning == "":
		return errors.New("meaning is empty")
	case len(s.Signer) > MaxSignerBytes:
		return fmt.Errorf("signer has %d bytes, more than the limit of %d", len(s.Signer), MaxSignerBytes)
	case len(s.Meaning) > MaxSignerBytes:
		return fmt.Errorf("meaning has %d bytes, more than the limit of %d", len(s.Meaning), MaxSignerBytes)
	}
	if _, ok := parseTime(s.SignedAt); !ok {
		return fmt.Errorf("signed_at %q is not UTC RFC 3339 with 9 fractional digits", s.SignedAt)
	}
	return nil
}

// Verify checks s against the pinned public key pub (RFC 8032 §5.1.7):
// the fields are well formed, KeyFingerprint names pub, and the signature
// verifies over signedMessage(s).
func (s Signature) Verify(pub ed25519.PublicKey) error {
	if len(pub) != ed25519.PublicKeySize {
		return fmt.Errorf("verify signature: public key has %d bytes, want %d", len(pub), ed25519.PublicKeySize)
	}
	if err := s.checkFields(); err != nil {
		return fmt.Errorf("verify signature: %w", err)
	}
	if fp := Fingerprint(pub); s.KeyFingerprint != fp {
		return fmt.Errorf("verify signature: made with key %s, not with the given key %s", s.KeyFingerprint, fp)
	}
	sig, err := base64.StdEncoding.Strict().DecodeString(s.Value)
	if err != nil {
		return fmt.Errorf("verify signature: value: %w", err)
	}
	if len(sig) != ed25519.SignatureSize {
		return fmt.Errorf("verify signature: value has %d bytes, want %d", len(sig), ed25519.SignatureSize)
	}
	msg, err := signedMessage(s)
	if err != nil {
		return fmt.Errorf("verify signature: %w", err)
	}
	if !ed25519.Verify(pub, msg, sig) {
		return errors.New("verify signature: signature does not match (the signed fields or the value were changed)")
	}
	return nil
}
