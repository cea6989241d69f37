package audit_test

import (
	"crypto/ed25519"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"time"

	"rankplan/runner/audit"
)

func ExampleCanonical() {
	negZero := math.Copysign(0, -1) // RFC 8785 writes -0 as 0
	b, err := audit.Canonical(map[string]any{"z": negZero, "a": "<&>", "n": 1e21})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(string(b))
	// Output: {"a":"<&>","n":1e+21,"z":0}
}

func ExampleDigest() {
	fmt.Println(audit.Digest([]byte("abc")))
	// Output: sha256:ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad
}

func ExampleFormatTime() {
	t := time.Date(2026, 12, 1, 21, 12, 32, 120000000, time.FixedZone("CET", 3600))
	fmt.Println(audit.FormatTime(t))
	// Output: 2026-12-01T20:12:32.120000000Z
}

func ExampleCurrentActor() {
	env := map[string]string{"GITHUB_RUN_ID": "42", "CI": "true"}
	a := audit.CurrentActor(func(k string) string { return env[k] }, "A. Tester", "first run")
	fmt.Println(a.CI, a.Signer, a.Reason)
	// Output: map[CI:true GITHUB_RUN_ID:42] A. Tester first run
}

// ExampleCreate writes a two-record log and checks it with ReadChain.
func ExampleCreate() {
	dir, _ := os.MkdirTemp("", "audit")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "audit.jsonl")
	clock := func() time.Time { return time.Date(2026, 12, 1, 20, 12, 32, 0, time.UTC) }
	l, err := audit.Create(path, audit.Actor{User: "demo", Host: "demo.invalid"}, clock)
	if err != nil {
		fmt.Println(err)
		return
	}
	l.Append("run.started", map[string]string{"tool": "rankplan demo"})
	l.Append("run.finished", map[string]int{"exit_code": 0})
	l.Close()

	chain, problems, warnings, err := audit.ReadChain(path)
	fmt.Println(len(chain.Records), len(problems), len(warnings), err, chain.Head == l.Head())
	b, _ := os.ReadFile(path)
	fmt.Print(string(b[:131]), "...\n")
	// Output:
	// 2 0 0 <nil> true
	// {"actor":{"host":"demo.invalid","user":"demo"},"data":{"tool":"rankplan demo"},"event":"run.started","prev":"sha256:000000000000000...
}

func ExampleReadChain() {
	dir, _ := os.MkdirTemp("", "audit")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "audit.jsonl")
	l, _ := audit.Create(path, audit.Actor{User: "demo", Host: "h"}, nil)
	l.Append("run.started", struct{}{})
	l.Close()
	b, _ := os.ReadFile(path)
	os.WriteFile(path, b[:len(b)-1], 0o644) // a torn write: the newline is missing
	_, problems, _, _ := audit.ReadChain(path)
	for _, p := range problems {
		fmt.Println(filepath.Base(p.File), p.Line, p.Msg)
	}
	// Output: audit.jsonl 1 torn write: last line does not end in a newline
}

func ExampleSign() {
	seed := make([]byte, ed25519.SeedSize) // an invented, all-zero demo key: never use one like it
	key := ed25519.NewKeyFromSeed(seed)
	at := time.Date(2026, 12, 1, 20, 12, 32, 0, time.UTC)
	s, err := audit.Sign(key, audit.Digest([]byte("head")), 3, "A. Tester", "approval", at)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Verify(key.Public().(ed25519.PublicKey)))
	s.Meaning = "review"
	fmt.Println(s.Verify(key.Public().(ed25519.PublicKey)) != nil)
	// Output:
	// <nil>
	// true
}

func ExampleDiff() {
	locked := json.RawMessage(`{"alpha":0.05,"analyses":[{"pvalue":{"method":"exact"}}]}`)
	now := json.RawMessage(`{"alpha":0.01,"analyses":[{"pvalue":{"method":"auto"}}],"seed":"7"}`)
	d, err := audit.Diff(locked, now)
	fmt.Println(d, err)
	// Output: [alpha analyses[0].pvalue.method seed] <nil>
}

func ExampleWriteLock() {
	dir, _ := os.MkdirTemp("", "audit")
	defer os.RemoveAll(dir)
	raw := []byte(`{"id": "demo", "alpha": 0.05}`) // an invented plan
	plan, _ := audit.Canonical(json.RawMessage(raw))
	l := audit.Lock{
		Format: audit.LockFormat, PlanID: "demo", PlanSHA256: audit.Digest(plan), RawSHA256: audit.Digest(raw),
		Plan: plan, LockedAt: audit.FormatTime(time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC)),
		Tool: "rankplan demo", Actor: audit.Actor{User: "demo", Host: "h"},
	}
	path := filepath.Join(dir, "plan.lock")
	fmt.Println(audit.WriteLock(path, l))
	fmt.Println(audit.WriteLock(path, l) != nil) // never replaces a lock
	b, _ := os.ReadFile(path)
	got, err := audit.ParseLock(b)
	fmt.Println(string(got.Plan), err)
	// Output:
	// <nil>
	// true
	// {"alpha":0.05,"id":"demo"} <nil>
}
