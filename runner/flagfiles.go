package runner

// The files named by flags of run and verify: signing and public keys, and the data file
// of verify --data. Each is read under a size limit, from a regular file only (symbolic
// links followed: the user named it), and a refusal is a usage error naming the flag.

import (
	"crypto/ed25519"
	"errors"
	"fmt"

	"rankplan/internal/infile"
	"rankplan/runner/audit"
	"rankplan/runner/data"
)

// loadSignKey reads the private key of run --sign, when one is named, and checks the
// flags that go with it, so that a run that cannot be signed is refused before anything
// is computed or written: the key file must be a regular file (symbolic links followed)
// of at most [MaxKeyBytes] holding an Ed25519 private key, and --signer and --meaning
// must fit in a signature ([audit.MaxSignerBytes] each). Every refusal is an
// [InputError] naming the flag.
func loadSignKey(opt RunOptions) (ed25519.PrivateKey, error) {
	if opt.SignKey == "" {
		return nil, nil
	}
	k, err := readKey("--sign", opt.SignKey, audit.ParsePrivateKey)
	switch {
	case err != nil:
		return nil, err
	case opt.Signer == "":
		return nil, &InputError{Err: errors.New("--sign needs --signer NAME: a signature names who signed")}
	case len(opt.Signer) > audit.MaxSignerBytes:
		return nil, &InputError{Err: fmt.Errorf("--signer: %d bytes, more than the limit of %d for a signer", len(opt.Signer), audit.MaxSignerBytes)}
	case len(opt.Meaning) > audit.MaxSignerBytes:
		return nil, &InputError{Err: fmt.Errorf("--meaning: %d bytes, more than the limit of %d for a meaning", len(opt.Meaning), audit.MaxSignerBytes)}
	}
	return k, nil
}

// loadPubKey reads the public key of verify --pubkey: a regular file (symbolic links
// followed) of at most [MaxKeyBytes] holding an Ed25519 public key. A refusal is an
// [InputError] naming the flag, "verify: --pubkey FILE: ...".
func loadPubKey(path string) (ed25519.PublicKey, error) {
	return readKey("verify: --pubkey", path, audit.ParsePublicKey)
}

// readKey reads the key file at path, named by flag, with parse.
func readKey[K any](flag, path string, parse func([]byte) (K, error)) (K, error) {
	var zero K
	b, err := infile.ReadFile(path, MaxKeyBytes)
	if err != nil {
		return zero, &InputError{Err: fmt.Errorf("%s %s: cannot open the key file: %w", flag, path, err)}
	}
	k, err := parse(b)
	if err != nil {
		return zero, &InputError{Err: fmt.Errorf("%s %s: %w", flag, path, err)}
	}
	return k, nil
}

// checkVerifyData refuses, before any check runs, a verify --data file that cannot be
// read as data: the rules of the data file of a plan (a regular file, symbolic links
// followed, of at most [data.MaxFileBytes]).
func checkVerifyData(path string) error {
	f, _, err := infile.Open(path, data.MaxFileBytes)
	if err != nil {
		return &InputError{Err: fmt.Errorf("verify: --data %s: cannot open the data file: %w", path, err)}
	}
	return f.Close()
}

// checkVerifyFlags checks the files named by the flags of verify before any check of the
// folder runs, and returns the pinned public key (nil without --pubkey). A missing,
// unreadable or wrong file is a usage error naming the flag (an [InputError], exit 2),
// never a failed check of the run.
func checkVerifyFlags(opt VerifyOptions) (ed25519.PublicKey, error) {
	var pub ed25519.PublicKey
	if opt.PubKey != "" {
		k, err := loadPubKey(opt.PubKey)
		if err != nil {
			return nil, err
		}
		pub = k
	}
	if opt.Data != "" {
		if err := checkVerifyData(opt.Data); err != nil {
			return nil, err
		}
	}
	return pub, nil
}
