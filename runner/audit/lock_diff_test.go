package audit

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

func TestDiff(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want []string
	}{
		{`{"a":1}`, `{"a":1}`, nil},
		{`{"alpha":0.05,"id":"x"}`, `{"alpha":0.01,"id":"x"}`, []string{"alpha"}},
		{`{"a":{"b":[1,2,{"c":true}]}}`, `{"a":{"b":[1,2,{"c":false}]}}`, []string{"a.b[2].c"}},
		{`{"a":[1,2]}`, `{"a":[1,2,3]}`, []string{"a[2]"}},
		{`{"z":1,"a":2}`, `{"y":1,"a":3}`, []string{"a", "y", "z"}},
		{`{"a":{"b":1}}`, `{"a":[1]}`, []string{"a"}},
		{`{"n":1.0}`, `{"n":1}`, []string{"n"}}, // compared by decimal text
		{`[1]`, `{"a":1}`, []string{"(top level)"}},
	} {
		got, err := Diff(json.RawMessage(tc.a), json.RawMessage(tc.b))
		if err != nil || !reflect.DeepEqual(got, tc.want) {
			t.Errorf("Diff(%s, %s) = %v, %v; want %v", tc.a, tc.b, got, err, tc.want)
		}
	}
	if _, err := Diff(json.RawMessage(`{`), json.RawMessage(`{}`)); err == nil {
		t.Error("bad JSON accepted")
	}
}

func TestLockRoundTrip(t *testing.T) {
	plan, _ := Canonical(map[string]any{"id": "p", "alpha": 0.05})
	l := Lock{Format: LockFormat, PlanID: "p", PlanSHA256: Digest(plan), RawSHA256: Digest([]byte("raw")),
		Plan: plan, LockedAt: FormatTime(time.Date(2026, 12, 1, 0, 0, 0, 5, time.UTC)), Tool: "rankplan test", Actor: Actor{User: "u", Host: "h"}}
	path := filepath.Join(t.TempDir(), "p.lock.json")
	if err := writeLock(path, l); err != nil {
		t.Fatal(err)
	}
	got, err := readLock(path)
	if err != nil || !reflect.DeepEqual(got, l) {
		t.Fatalf("round trip: %v\n%+v\n%+v", err, got, l)
	}
	b, _ := os.ReadFile(path)
	for name, edit := range map[string]func(string) string{
		"plan value":  func(s string) string { return strings.Replace(s, `0.05`, `0.01`, 1) },
		"digest":      func(s string) string { return strings.Replace(s, l.PlanSHA256[10:20], "0000000000", 1) },
		"format":      func(s string) string { return strings.Replace(s, LockFormat, "rankplan-lock/9", 1) },
		"unknown key": func(s string) string { return strings.Replace(s, `"format"`, `"extra": 1, "format"`, 1) },
		"bad time":    func(s string) string { return strings.Replace(s, l.LockedAt, "2026-12-01", 1) },
	} {
		p := filepath.Join(t.TempDir(), "x.json")
		edited := edit(string(b))
		if edited == string(b) {
			t.Errorf("%s: the edit changed nothing", name)
			continue
		}
		os.WriteFile(p, []byte(edited), 0o644)
		if _, err := readLock(p); err == nil {
			t.Errorf("%s: tampered lock accepted", name)
		}
	}
}
