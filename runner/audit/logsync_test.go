package audit

import (
	"path/filepath"
	"testing"
	"time"
)

// TestLogSync: every record is in the file when Append returns, before any Sync, so that a
// process killed at any point leaves each record it appended (ReadChain reads them); Sync
// and Close make them durable, Sync of a log with nothing new is a no-op, and a closed
// log refuses Sync and Append.
func TestLogSync(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.jsonl")
	l, err := Create(path, testActor, time.Now)
	if err != nil {
		t.Fatal(err)
	}
	if err := l.Sync(); err != nil {
		t.Fatalf("sync of an empty log: %v", err)
	}
	for i := range 3 {
		if _, err := l.Append("run.step", map[string]any{"i": i}); err != nil {
			t.Fatal(err)
		}
		chain, problems, _, err := ReadChain(path)
		if err != nil || len(problems) > 0 || len(chain.Records) != i+1 || chain.Head != l.Head() {
			t.Fatalf("after append %d, before any sync: %d records, head %s (log %s): %v %v", i+1, len(chain.Records), chain.Head, l.Head(), err, problems)
		}
	}
	for range 2 {
		if err := l.Sync(); err != nil {
			t.Fatal(err)
		}
	}
	if err := l.Close(); err != nil {
		t.Fatal(err)
	}
	if err := l.Sync(); err == nil {
		t.Error("sync of a closed log: no error")
	}
	if _, err := l.Append("run.step", map[string]any{}); err == nil {
		t.Error("append to a closed log: no error")
	}
}
