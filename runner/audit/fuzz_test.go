package audit

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// FuzzReadChain feeds arbitrary bytes to the chain checker. It must never
// panic, every problem must name a line of the input, and an input with no
// problems must re-serialise byte for byte from its records.
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
		ch, problems, warnings := checkChain("f", content)
		lines := bytes.Count(content, []byte("\n")) + 1
		for _, pr := range append(problems, warnings...) {
			if pr.Line < 1 || pr.Line > lines {
				t.Fatalf("problem on line %d of %d: %v", pr.Line, lines, pr)
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
	})
}
